package api

import (
	"testing"

	"github.com/stretchr/testify/require"

	"lipidsvc/chem/identity"
)

// A plant file's errors name the line and the field.
func TestSpecificationDocumentErrorsNameLineAndField(t *testing.T) {
	doc := `{"specifications": [
  {"id": "northbay_blend_a", "name": "Northbay frying blend A",
   "acids": [
     {"acid": "C16:0", "min": 8, "max": 12},
     {"acid": "C18:1", "min": 60, "max": 50}
   ]},
  {"id": "Bad Id", "name": "x", "acids": [{"acid": "C99:0", "max": 1}]}
]}`
	_, err := ParseSpecificationDocument([]byte(doc))
	require.Error(t, err)
	var de SpecificationDocumentErrors
	require.ErrorAs(t, err, &de)
	byPtr := map[string]int{}
	for _, e := range de {
		byPtr[e.Pointer] = e.Line
	}
	require.Equal(t, 5, byPtr["/specifications/0/acids/1/max"], err.Error())
	require.Equal(t, 7, byPtr["/specifications/1/id"], err.Error())
	require.Equal(t, 7, byPtr["/specifications/1/acids/0/acid"], err.Error())

	_, err = ParseSpecificationDocument([]byte("{\"specifications\": [\n  {\"id\": \"a\",\n}"))
	require.ErrorAs(t, err, &de)
	require.Equal(t, 3, de[0].Line, err.Error())

	specs, err := ParseSpecificationDocument([]byte(`{"specifications":[{"id":"soybean","name":"Northbay soybean oil, tighter","acids":[{"acid":"C18:3","min":6,"max":8}]}]}`))
	require.NoError(t, err)
	lib := identity.NewLibrary(specs)
	s, _ := lib.ByID("soybean")
	require.True(t, s.Plant)
	require.Len(t, s.Acids, 1, "a plant specification replaces the reference of the same id")
	require.Len(t, lib.All(), len(identity.References()))
}
