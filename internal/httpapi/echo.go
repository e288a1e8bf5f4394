package httpapi

import (
	"bytes"
	"encoding/json"
	"reflect"
	"strings"
	"sync"

	"github.com/gin-gonic/gin"
)

// decodeEcho decodes a JSON object body into in like decodeJSON, but also
// accepts, and ignores, the read-only fields of the resource's
// representation view (the body a GET returns): the fields of view's type
// that in's type does not take, such as a hole's "corrections" or a
// measurement's "derived". So a GET body can be edited and PUT back. Fields
// that are in neither are still refused as unknown.
func (s *Server) decodeEcho(c *gin.Context, in, view any) error {
	var obj map[string]json.RawMessage
	if err := s.decodeJSON(c, &obj); err != nil {
		return err
	}
	takes := jsonNames(reflect.TypeOf(in))
	for name := range jsonNames(reflect.TypeOf(view)) {
		if !takes[name] {
			delete(obj, name)
		}
	}
	b, err := json.Marshal(obj)
	if err != nil {
		return jsonError(err)
	}
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.DisallowUnknownFields()
	if err := dec.Decode(in); err != nil {
		return jsonError(err)
	}
	return nil
}

// namesOf keeps jsonNames' answer per type (a handful of types, asked on
// every write of a measurement, hole and the like).
var namesOf sync.Map // reflect.Type -> map[string]bool, never written after

// jsonNames returns the JSON names of the fields of struct type t (or a
// pointer to one), with those of embedded structs. The map is shared: read
// it only.
func jsonNames(t reflect.Type) map[string]bool {
	if names, ok := namesOf.Load(t); ok {
		return names.(map[string]bool)
	}
	names := fieldNames(t)
	namesOf.Store(t, names)
	return names
}

func fieldNames(t reflect.Type) map[string]bool {
	for t.Kind() == reflect.Pointer {
		t = t.Elem()
	}
	names := map[string]bool{}
	if t.Kind() != reflect.Struct {
		return names
	}
	for i := 0; i < t.NumField(); i++ {
		f := t.Field(i)
		tag := f.Tag.Get("json")
		name, _, _ := strings.Cut(tag, ",")
		switch {
		case name == "-":
		case f.Anonymous && name == "":
			for n := range jsonNames(f.Type) {
				names[n] = true
			}
		case !f.IsExported():
		case name == "":
			names[f.Name] = true
		default:
			names[name] = true
		}
	}
	return names
}
