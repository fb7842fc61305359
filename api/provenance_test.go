package api

import (
	"testing"

	"github.com/stretchr/testify/require"
)

// The parameters of a request are its members less the data, compacted,
// keys sorted; strings with escapes and nesting are followed.
func TestParametersOf(t *testing.T) {
	for body, want := range map[string]string{
		`{"profile":{"acids":[{"acid":"a\"}","percent":1}]},"material":"free_fatty_acids"}`:           `{"material":"free_fatty_acids"}`,
		` { "target" : { "iodine_value" : 70 } , "catalyst":{"preset":"copper"}, "path_points": 21 }`: `{"catalyst":{"preset":"copper"},"path_points":21,"target":{"iodine_value":70}}`,
		`{"profile":{}}`: `{}`,
		`[1,2]`:          `{}`,
		`{"a":[1,{"b":"]"}],"c":true,"d":null,"e":-1.5e3}`: `{"a":[1,{"b":"]"}],"c":true,"d":null,"e":-1.5e3}`,
		`{"a":`: `{}`,
		// Escaped names are decoded (an escaped data member is still data).
		`{"pro\u0066ile":{"acids":[]},"m\u00e9thode":1,"x\"y":2}`: `{"méthode":1,"x\"y":2}`,
	} {
		require.Equal(t, want, string(parametersOf([]byte(body))), body)
	}
}

// TestPointerEscapes: RFC 6901 §3 escapes "~" as "~0" and "/" as "~1" in
// each reference token; integers are array indices.
func TestPointerEscapes(t *testing.T) {
	require.Equal(t, "", Pointer())
	require.Equal(t, "/profile/acids/12/acid", Pointer("profile", "acids", 12, "acid"))
	require.Equal(t, "/a~1b/m~0n/~01", Pointer("a/b", "m~n", "~1"))
	require.Equal(t, "/options/forecast/path_points", Pointer("options", "forecast", "path_points"))
	require.Equal(t, "/x/-3/true", Pointer("x", -3, true))
}
