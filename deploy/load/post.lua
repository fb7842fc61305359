-- post.lua: wrk script for deploy/load/run.sh.
--
-- Sends the same JSON body on every request. The path of the body file is
-- passed after "--" on the wrk command line:
--
--   wrk -s deploy/load/post.lua http://127.0.0.1:18080/v1/properties -- body.json
--
-- wrk calls init() once per thread, before it formats that thread's request,
-- so the method, body and headers set here go into every request it sends.

function init(args)
  local path = args[1]
  if path == nil or path == "" then
    error("post.lua: pass the request body file after '--'")
  end
  local file, err = io.open(path, "rb")
  if file == nil then
    error("post.lua: cannot open request body: " .. tostring(err))
  end
  local body = file:read("*a")
  file:close()

  wrk.method = "POST"
  wrk.body = body
  wrk.headers["Content-Type"] = "application/json"
end
