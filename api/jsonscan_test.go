package api

import (
	"strings"
	"testing"

	"github.com/stretchr/testify/require"
)

func TestDuplicateMember(t *testing.T) {
	cases := []struct {
		body, pointer string
	}{
		{`{"a":1,"b":2}`, ""},
		{`{"a":1,"a":2}`, "/a"},
		{`{"p":{"acids":[{"acid":"16:0","percent":50,"percent":100}]}}`, "/p/acids/0/percent"},
		{`{"a":{"x":1},"b":{"x":1}}`, ""},               // the same key in different objects
		{`[{"x":1},{"x":2,"x":3}]`, "/1/x"},             // inside an array
		{`{"a":1,"\u0061":2}`, "/a"},                    // equal once decoded
		{`{"a/b":1,"a/b":2}`, "/a~1b"},                  // pointer escaping
		{`{"é":1,"é":2}`, "/é"},                         // non-ASCII keys
		{`{"a":1,"a":2` + strings.Repeat(" ", 3), "/a"}, // a duplicate before a syntax error still counts
		{`{"a":[1,2}`, ""},                              // malformed, no duplicate
		{`[1 2]`, ""},                                   // malformed array: must end (once looped forever)
		{`{"a" 1, "a": 2}`, ""},
		{`{"a":1}{"a":1,"a":2}`, ""}, // only the first value counts
		{``, ""},
		{`"x"`, ""},
		{"\ufeff{\"a\":1,\"a\":2}", ""}, // a byte-order mark is not JSON
	}
	for _, c := range cases {
		ptr, dup := DuplicateMember([]byte(c.body))
		require.Equal(t, c.pointer != "", dup, c.body)
		require.Equal(t, c.pointer, ptr, c.body)
		// The exact check alone says the same.
		ptr, dup = exactDuplicate([]byte(c.body))
		require.Equal(t, c.pointer != "", dup, c.body)
		require.Equal(t, c.pointer, ptr, c.body)
	}
}

// TestExactDuplicateEndsOnMalformedJSON: the token walk stops at the first
// syntax error wherever it is (an earlier version looped forever on an
// array whose items lack commas, because More stays true after Token fails).
func TestExactDuplicateEndsOnMalformedJSON(t *testing.T) {
	for _, body := range []string{`[1 2]`, `[[1 2]]`, `{"a":[1 2]}`, `[{"a":1} {"b":2}]`, `{"a":1 "b":2}`, `[1,]`, `[`, `{`, `{"a":`} {
		_, dup := exactDuplicate([]byte(body))
		require.False(t, dup, body)
	}
}

// TestFastScanAllocatesNothing: the fast path of a clean, ordinary body
// allocates nothing (a property of the code, not a timing).
func TestFastScanAllocatesNothing(t *testing.T) {
	body := []byte(`{"profile":{"basis":"fame_weight_percent","acids":[{"acid":"16:0","percent":10.5},{"acid":"18:1 c9","percent":89.5}]},"material":"triacylglycerols"}`)
	allocs := testing.AllocsPerRun(100, func() {
		if fastScan(body) != scanClean {
			t.Fatal("not clean")
		}
	})
	require.Zero(t, allocs)
}

// FuzzDuplicateMember holds the fast scan to the exact check: where the
// fast path decides alone (a clean body), the exact walk must find no
// duplicate; where it finds one, so must the exact walk.
func FuzzDuplicateMember(f *testing.F) {
	for _, s := range []string{
		`{"a":1,"b":2}`, `{"a":1,"a":2}`, `[{"x":1},{"x":2,"x":3}]`, `{"a":1,"\u0061":2}`, `[1 2]`,
		`{"profile":{"acids":[{"acid":"16:0","percent":50},{"acid":"18:1","percent":50}]}}`,
		`{"a":{"b":{"c":{"d":[1,2,{"e":null,"e":true}]}}}}`, `{"k\"":1,"k\"":2}`, `{"a":-0.5e+3,"a":"x"}`,
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, body []byte) {
		_, exact := exactDuplicate(body)
		switch fastScan(body) {
		case scanClean:
			if exact {
				t.Fatalf("fast scan found no duplicate in %q, the exact check did", body)
			}
		case scanDuplicate:
			if !exact {
				t.Fatalf("fast scan found a duplicate in %q, the exact check did not", body)
			}
		}
		_, dup := DuplicateMember(body)
		if dup != exact {
			t.Fatalf("DuplicateMember says %v, the exact check %v, for %q", dup, exact, body)
		}
	})
}
