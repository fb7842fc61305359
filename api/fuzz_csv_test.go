package api_test

import (
	"net/http"
	"testing"

	"github.com/stretchr/testify/require"
)

// FuzzCSVBatch posts arbitrary CSV bodies as a batch: never a 5xx, and
// every answer (a JSON batch or a problem) matches the contract. Seeds:
// a well-formed export, a semicolon export with decimal commas, broken
// headers and rows. Run long with
// go test ./api -run '^$' -fuzz FuzzCSVBatch -fuzztime 5m.
func FuzzCSVBatch(f *testing.F) {
	f.Add(csvBatch(3))
	f.Add("sample_id,16:0,18:1 c9,18:2 c9,c12\nA,10,30,60\n")
	f.Add("sample,C16:0,C18:7\nA,10,90\n")
	f.Add("lot;C16:0;C18:1n9c\nA;10,5;89,5\nB;x;1\nC;1\n")
	f.Add("\ufeffSample Name\tC16:0\tC18:0\n\"a\"\"b\"\t50\t50\n")
	f.Add("")
	app := newApp(f)
	f.Fuzz(func(t *testing.T, body string) {
		rec := do(t, app, call{method: http.MethodPost, path: "/v1/batch?evaluations=properties", body: body,
			header: map[string]string{"Content-Type": "text/csv"}})
		require.Less(t, rec.Code, 500, "%q: %s", body, rec.Body.String())
	})
}
