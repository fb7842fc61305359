#!/usr/bin/env bash
# run.sh: bounded local load test of lipidsvc.
#
# Builds the binary into a temporary folder, starts it on loopback, waits for
# /readyz, checks one request by hand, runs wrk for a fixed time POSTing a
# JSON body to /v1/properties, prints wrk's latency summary and the
# lipidsvc_http_requests_total series from /metrics, then sends SIGTERM and
# waits for a clean exit. Traffic goes to loopback addresses only.
#
# Usage (from anywhere):  deploy/load/run.sh
#
# Environment (all optional):
#   LIPIDSVC_ADDR          API listen address     (default 127.0.0.1:18080)
#   LIPIDSVC_METRICS_ADDR  metrics listen address (default 127.0.0.1:19090)
#   LOAD_DURATION          how long wrk runs: N, Ns or Nm, at most 600 s (default 20s)
#   LOAD_THREADS           wrk threads            (default 2)
#   LOAD_CONNECTIONS       open connections       (default 32)
#   LOAD_BODY              request body file      (default testdata/demo/properties-request.json)
#   LOAD_PATH              request path           (default /v1/properties)
#   LOAD_LOG_LEVEL         server log level       (default warn: info logs every request)
#   LOAD_READY_TIMEOUT     seconds to wait for /readyz        (default 30)
#   LOAD_STOP_TIMEOUT      seconds to wait for exit after TERM (default 25)
# Other LIPIDSVC_* variables in the environment reach the server unchanged.
#
# Exit status: 0 when the server started, served the load without errors or
# non-2xx answers, and exited 0 after SIGTERM; non-zero otherwise.

set -euo pipefail

script_dir="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"
repo_root="$(cd "$script_dir/../.." && pwd)"

api_addr="${LIPIDSVC_ADDR:-127.0.0.1:18080}"
metrics_addr="${LIPIDSVC_METRICS_ADDR:-127.0.0.1:19090}"
duration="${LOAD_DURATION:-20s}"
threads="${LOAD_THREADS:-2}"
connections="${LOAD_CONNECTIONS:-32}"
body_file="${LOAD_BODY:-$repo_root/testdata/demo/properties-request.json}"
request_path="${LOAD_PATH:-/v1/properties}"
log_level="${LOAD_LOG_LEVEL:-warn}"
ready_timeout="${LOAD_READY_TIMEOUT:-30}"
stop_timeout="${LOAD_STOP_TIMEOUT:-25}"

max_duration_s=600

log() { printf '==> %s\n' "$*" >&2; }
die() { printf 'run.sh: %s\n' "$*" >&2; exit 1; }

# ---------------------------------------------------------------- checks --

# Only loopback targets: 127.0.0.0/8, localhost or [::1], with a port.
require_loopback() {
  local name=$1 addr=$2 host port
  host="${addr%:*}"
  port="${addr##*:}"
  if [[ ! $host =~ ^127\.[0-9]{1,3}\.[0-9]{1,3}\.[0-9]{1,3}$ && $host != localhost && $host != '[::1]' ]]; then
    die "$name=$addr: only loopback addresses (127.0.0.0/8, localhost, [::1]) are allowed"
  fi
  if [[ ! $port =~ ^[0-9]{1,5}$ ]] || (( 10#$port < 1 || 10#$port > 65535 )); then
    die "$name=$addr: needs an explicit port"
  fi
}

# True if something already accepts connections on addr.
in_use() {
  local addr=$1 host port
  host="${addr%:*}"
  host="${host#[}"
  host="${host%]}"
  port="${addr##*:}"
  # shellcheck disable=SC2016 # $1 and $2 expand in the child shell
  timeout 2 bash -c 'exec 3<>"/dev/tcp/$1/$2"' _ "$host" "$port" 2>/dev/null
}

require_positive_int() {
  if [[ ! $2 =~ ^[0-9]{1,6}$ ]] || (( 10#$2 == 0 )); then
    die "$1=$2: expected a positive integer"
  fi
}

# Installs a Debian package when its command is missing and we may do so.
need_command() {
  local cmd=$1 pkg=$2
  command -v "$cmd" >/dev/null 2>&1 && return 0
  if [[ $(id -u) -eq 0 ]] && command -v apt-get >/dev/null 2>&1; then
    log "installing $pkg (Debian package)"
    apt-get update -qq
    DEBIAN_FRONTEND=noninteractive apt-get install -y -qq "$pkg" >/dev/null
  else
    die "$cmd not found; install it with: sudo apt-get install $pkg"
  fi
  command -v "$cmd" >/dev/null 2>&1 || die "$cmd still not found after installing $pkg"
}

require_loopback LIPIDSVC_ADDR "$api_addr"
require_loopback LIPIDSVC_METRICS_ADDR "$metrics_addr"
[[ $api_addr != "$metrics_addr" ]] || die "API and metrics addresses must differ"

if [[ $duration =~ ^([0-9]{1,6})s?$ ]]; then
  duration_s=$(( 10#${BASH_REMATCH[1]} ))
elif [[ $duration =~ ^([0-9]{1,4})m$ ]]; then
  duration_s=$(( 10#${BASH_REMATCH[1]} * 60 ))
else
  die "LOAD_DURATION=$duration: expected N, Ns or Nm"
fi
(( duration_s >= 1 && duration_s <= max_duration_s )) \
  || die "LOAD_DURATION=$duration: must be between 1 s and $max_duration_s s"

require_positive_int LOAD_THREADS "$threads"
require_positive_int LOAD_CONNECTIONS "$connections"
require_positive_int LOAD_READY_TIMEOUT "$ready_timeout"
require_positive_int LOAD_STOP_TIMEOUT "$stop_timeout"
# Normalise to base 10 ("08" would otherwise read as a bad octal number).
threads=$(( 10#$threads ))
connections=$(( 10#$connections ))
ready_timeout=$(( 10#$ready_timeout ))
stop_timeout=$(( 10#$stop_timeout ))
(( connections >= threads )) || die "LOAD_CONNECTIONS must be at least LOAD_THREADS"
[[ $request_path == /* ]] || die "LOAD_PATH=$request_path: must start with /"
[[ -r $body_file ]] || die "request body not readable: $body_file (set LOAD_BODY)"
body_file="$(cd "$(dirname "$body_file")" && pwd)/$(basename "$body_file")"

need_command go golang-go
need_command curl curl
need_command wrk wrk

in_use "$api_addr" && die "$api_addr is already in use; set LIPIDSVC_ADDR to a free loopback port"
in_use "$metrics_addr" && die "$metrics_addr is already in use; set LIPIDSVC_METRICS_ADDR to a free loopback port"

api_url="http://$api_addr"
metrics_url="http://$metrics_addr"

# ------------------------------------------------------- lifecycle/cleanup --

workdir="$(mktemp -d "${TMPDIR:-/tmp}/lipidsvc-load.XXXXXX")"
server_pid=""

cleanup() {
  local rc=$?
  if [[ -n $server_pid ]] && kill -0 "$server_pid" 2>/dev/null; then
    kill -TERM "$server_pid" 2>/dev/null || true
    for _ in {1..50}; do
      kill -0 "$server_pid" 2>/dev/null || break
      sleep 0.2
    done
    kill -KILL "$server_pid" 2>/dev/null || true
    wait "$server_pid" 2>/dev/null || true
  fi
  if (( rc != 0 )) && [[ -s $workdir/server.log ]]; then
    printf -- '--- last lines of the server log ---\n' >&2
    tail -n 40 "$workdir/server.log" >&2
  fi
  rm -rf "$workdir"
  exit "$rc"
}
trap cleanup EXIT
trap 'exit 130' INT
trap 'exit 143' TERM

# ------------------------------------------------------------ build & run --

log "building lipidsvc"
(cd "$repo_root" && CGO_ENABLED=0 go build -trimpath -ldflags="-s -w" -o "$workdir/lipidsvc" .)

log "starting lipidsvc on $api_addr (metrics on $metrics_addr)"
LIPIDSVC_ADDR="$api_addr" \
LIPIDSVC_METRICS_ADDR="$metrics_addr" \
LIPIDSVC_LOG_LEVEL="$log_level" \
  "$workdir/lipidsvc" >"$workdir/server.log" 2>&1 &
server_pid=$!

deadline=$(( SECONDS + ready_timeout ))
until curl -fs -o /dev/null --max-time 1 "$api_url/readyz"; do
  kill -0 "$server_pid" 2>/dev/null || die "lipidsvc exited during start-up"
  (( SECONDS < deadline )) || die "lipidsvc not ready after ${ready_timeout}s"
  sleep 0.2
done
log "ready"

# One request by hand first, so a bad body fails fast instead of producing
# a whole run of 4xx answers.
status="$(curl -sS -o "$workdir/first-response.json" -w '%{http_code}' --max-time 10 \
  -H 'Content-Type: application/json' --data-binary "@$body_file" "$api_url$request_path")"
if [[ $status != 2?? ]]; then
  cat "$workdir/first-response.json" >&2 || true
  printf '\n' >&2
  die "POST $request_path answered $status, expected 2xx"
fi
log "POST $request_path answered $status; running wrk for ${duration_s}s, $threads threads, $connections connections"

# ------------------------------------------------------------------- load --

# timeout is a backstop: wrk stops itself after -d.
timeout --signal=INT --kill-after=10 $(( duration_s + 30 )) \
  wrk --latency -t "$threads" -c "$connections" -d "${duration_s}s" --timeout 5s \
    -s "$script_dir/post.lua" "$api_url$request_path" -- "$body_file" \
  | tee "$workdir/wrk.txt"

load_errors=""
if grep -q '^ *Non-2xx or 3xx responses:' "$workdir/wrk.txt"; then
  load_errors+=" non-2xx answers;"
fi
if grep -q '^ *Socket errors:' "$workdir/wrk.txt"; then
  load_errors+=" socket errors or timeouts;"
fi

# ---------------------------------------------------------------- metrics --

log "lipidsvc_http_requests_total from $metrics_url/metrics"
curl -fsS --max-time 5 -o "$workdir/metrics.txt" "$metrics_url/metrics"
grep '^lipidsvc_http_requests_total' "$workdir/metrics.txt" \
  || echo "(no lipidsvc_http_requests_total series found)"

# --------------------------------------------------------------- shutdown --

log "sending SIGTERM"
kill -TERM "$server_pid"
# Informational: a draining server answers 503 here, or has already closed
# its listener (000) when nothing was in flight.
ready_after="$(curl -s -o /dev/null -w '%{http_code}' --max-time 1 "$api_url/readyz" || true)"
log "/readyz right after SIGTERM: ${ready_after:-000}"

deadline=$(( SECONDS + stop_timeout ))
while kill -0 "$server_pid" 2>/dev/null; do
  (( SECONDS < deadline )) || die "lipidsvc still running ${stop_timeout}s after SIGTERM"
  sleep 0.2
done
server_rc=0
wait "$server_pid" || server_rc=$?
server_pid=""
(( server_rc == 0 )) || die "lipidsvc exited with status $server_rc after SIGTERM"
log "lipidsvc exited cleanly"

if [[ -n $load_errors ]]; then
  die "wrk reported:$load_errors see the summary above"
fi
