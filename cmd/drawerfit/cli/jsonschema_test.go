package cli

import (
	"bytes"
	"encoding"
	"encoding/json"
	"fmt"
	"path/filepath"
	"reflect"
	"sort"
	"strings"
	"time"
)

// The JSON vocabulary of the commands is written down once, as the Go
// types each command's --json prints. The tests turn those types into one
// JSON Schema file per output under docs/schema/ (rewritten with -update,
// so the files cannot drift from the code), check that the types keep the
// vocabulary's rules (every key always present; one key, one type in every
// output), and validate what each command really prints against its file.

// schemaGen turns Go types into JSON Schema (draft 2020-12), following
// encoding/json's rules for field names and embedded structs.
type schemaGen struct {
	defs map[string]any
	// omitempty lists the fields whose key may be missing (the vocabulary
	// forbids that: keys are always present, as null or empty).
	omitempty []string
	// unknown lists types with their own MarshalJSON the generator cannot
	// describe.
	unknown []string
}

var (
	timeType          = reflect.TypeOf(time.Time{})
	jsonMarshalerType = reflect.TypeOf((*json.Marshaler)(nil)).Elem()
	textMarshalerType = reflect.TypeOf((*encoding.TextMarshaler)(nil)).Elem()
)

// defName names a named type in $defs: "cli.jsonFit", "tolerance.Boards".
func defName(t reflect.Type) string {
	pkg := t.PkgPath()
	if i := strings.LastIndex(pkg, "/"); i >= 0 {
		pkg = pkg[i+1:]
	}
	return pkg + "." + t.Name()
}

func nullable(s map[string]any) map[string]any {
	if tp, ok := s["type"].(string); ok {
		out := map[string]any{}
		for k, v := range s {
			out[k] = v
		}
		out["type"] = []any{tp, "null"}
		return out
	}
	return map[string]any{"anyOf": []any{s, map[string]any{"type": "null"}}}
}

// schema returns the schema of values of type t.
func (g *schemaGen) schema(t reflect.Type) map[string]any {
	if t == timeType {
		return map[string]any{"type": "string", "format": "date-time"}
	}
	if t.Kind() == reflect.Pointer {
		return nullable(g.schema(t.Elem()))
	}
	if t.Implements(jsonMarshalerType) || reflect.PointerTo(t).Implements(jsonMarshalerType) {
		g.unknown = append(g.unknown, defName(t))
		return map[string]any{}
	}
	if t.Implements(textMarshalerType) || reflect.PointerTo(t).Implements(textMarshalerType) {
		return map[string]any{"type": "string"}
	}
	switch t.Kind() {
	case reflect.Bool:
		return map[string]any{"type": "boolean"}
	case reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64:
		return map[string]any{"type": "integer"}
	case reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64:
		return map[string]any{"type": "integer", "minimum": 0}
	case reflect.Float32, reflect.Float64:
		return map[string]any{"type": "number"}
	case reflect.String:
		return map[string]any{"type": "string"}
	case reflect.Interface:
		return map[string]any{}
	case reflect.Slice, reflect.Array:
		return map[string]any{"type": []any{"array", "null"}, "items": g.schema(t.Elem())}
	case reflect.Map:
		return map[string]any{"type": []any{"object", "null"}, "additionalProperties": g.schema(t.Elem())}
	case reflect.Struct:
		if t.Name() == "" {
			return g.object(t)
		}
		name := defName(t)
		if _, ok := g.defs[name]; !ok {
			g.defs[name] = nil // recursion guard
			g.defs[name] = g.object(t)
		}
		return map[string]any{"$ref": "#/$defs/" + name}
	}
	g.unknown = append(g.unknown, t.String())
	return map[string]any{}
}

// object is the schema of a struct: every field's key required, no others.
func (g *schemaGen) object(t reflect.Type) map[string]any {
	props := map[string]any{}
	var required []string
	g.fields(t, props, &required)
	sort.Strings(required)
	return map[string]any{"type": "object", "properties": props, "required": required, "additionalProperties": false}
}

func (g *schemaGen) fields(t reflect.Type, props map[string]any, required *[]string) {
	for i := 0; i < t.NumField(); i++ {
		f := t.Field(i)
		tag := f.Tag.Get("json")
		if tag == "-" {
			continue
		}
		name, opts, _ := strings.Cut(tag, ",")
		if f.Anonymous && name == "" {
			ft := f.Type
			if ft.Kind() == reflect.Pointer {
				ft = ft.Elem()
			}
			if ft.Kind() == reflect.Struct {
				g.fields(ft, props, required)
				continue
			}
		}
		if !f.IsExported() {
			continue
		}
		if name == "" {
			name = f.Name
		}
		if strings.Contains(","+opts+",", ",omitempty,") || strings.Contains(","+opts+",", ",omitzero,") {
			g.omitempty = append(g.omitempty, defName(t)+"."+f.Name+" ("+name+")")
		}
		props[name] = g.schema(f.Type)
		*required = append(*required, name)
	}
}

// document is the schema file of one command's output.
func (g *schemaGen) document(title, desc string, t reflect.Type) map[string]any {
	doc := map[string]any{
		"$schema":     "https://json-schema.org/draft/2020-12/schema",
		"title":       title,
		"description": desc,
	}
	for k, v := range g.schema(t) {
		doc[k] = v
	}
	if len(g.defs) > 0 {
		doc["$defs"] = g.defs
	}
	return doc
}

// marshalSchema writes a schema as indented JSON with sorted keys.
func marshalSchema(doc map[string]any) []byte {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetIndent("", "  ")
	enc.SetEscapeHTML(false)
	if err := enc.Encode(doc); err != nil {
		panic(err)
	}
	return buf.Bytes()
}

// validate checks value v (decoded with UseNumber) against schema s of
// document root and returns every violation with its path.
func validate(root, s map[string]any, v any, path string) []string {
	if ref, ok := s["$ref"].(string); ok {
		name := strings.TrimPrefix(ref, "#/$defs/")
		defs, _ := root["$defs"].(map[string]any)
		def, ok := defs[name].(map[string]any)
		if !ok {
			return []string{path + ": unknown $ref " + ref}
		}
		return validate(root, def, v, path)
	}
	if alts, ok := s["anyOf"].([]any); ok {
		var all []string
		for _, alt := range alts {
			errs := validate(root, alt.(map[string]any), v, path)
			if len(errs) == 0 {
				return nil
			}
			all = append(all, errs...)
		}
		return []string{path + ": matches no alternative (" + strings.Join(all, "; ") + ")"}
	}
	if tp, ok := s["type"]; ok {
		var types []string
		switch x := tp.(type) {
		case string:
			types = []string{x}
		case []any:
			for _, e := range x {
				types = append(types, e.(string))
			}
		}
		got := jsonType(v)
		match := false
		for _, t := range types {
			if t == got || (t == "number" && got == "integer") {
				match = true
			}
		}
		if !match {
			return []string{fmt.Sprintf("%s: %s, want %s", path, got, strings.Join(types, " or "))}
		}
	}
	var errs []string
	switch x := v.(type) {
	case map[string]any:
		props, _ := s["properties"].(map[string]any)
		if req, ok := s["required"].([]any); ok {
			for _, r := range req {
				if _, ok := x[r.(string)]; !ok {
					errs = append(errs, fmt.Sprintf("%s: key %q missing", path, r))
				}
			}
		}
		keys := make([]string, 0, len(x))
		for k := range x {
			keys = append(keys, k)
		}
		sort.Strings(keys)
		for _, k := range keys {
			if ps, ok := props[k].(map[string]any); ok {
				errs = append(errs, validate(root, ps, x[k], path+"."+k)...)
				continue
			}
			switch ap := s["additionalProperties"].(type) {
			case bool:
				if !ap {
					errs = append(errs, fmt.Sprintf("%s: key %q is not in the vocabulary", path, k))
				}
			case map[string]any:
				errs = append(errs, validate(root, ap, x[k], path+"."+k)...)
			}
		}
	case []any:
		if items, ok := s["items"].(map[string]any); ok {
			for i, e := range x {
				errs = append(errs, validate(root, items, e, fmt.Sprintf("%s[%d]", path, i))...)
			}
		}
	}
	return errs
}

// jsonType is the JSON Schema type of a decoded value.
func jsonType(v any) string {
	switch x := v.(type) {
	case nil:
		return "null"
	case bool:
		return "boolean"
	case json.Number:
		if strings.ContainsAny(x.String(), ".eE") {
			return "number"
		}
		return "integer"
	case float64:
		return "number"
	case string:
		return "string"
	case []any:
		return "array"
	case map[string]any:
		return "object"
	}
	return fmt.Sprintf("%T", v)
}

// keyTypes collects, for every object key in a schema document, the JSON
// types its value may have (null aside), with where it was seen.
func keyTypes(doc map[string]any, file string, into map[string]map[string][]string) {
	var walk func(s map[string]any, where string)
	seen := map[string]bool{}
	walk = func(s map[string]any, where string) {
		if ref, ok := s["$ref"].(string); ok {
			name := strings.TrimPrefix(ref, "#/$defs/")
			if seen[name] {
				return
			}
			seen[name] = true
			defs, _ := doc["$defs"].(map[string]any)
			if d, ok := defs[name].(map[string]any); ok {
				walk(d, name)
			}
			return
		}
		if alts, ok := s["anyOf"].([]any); ok {
			for _, a := range alts {
				walk(a.(map[string]any), where)
			}
			return
		}
		if props, ok := s["properties"].(map[string]any); ok {
			for k, p := range props {
				ps := p.(map[string]any)
				for _, t := range schemaTypes(doc, ps) {
					if into[k] == nil {
						into[k] = map[string][]string{}
					}
					into[k][t] = append(into[k][t], file+" "+where)
				}
				walk(ps, where+"."+k)
			}
		}
		if items, ok := s["items"].(map[string]any); ok {
			walk(items, where+"[]")
		}
		if ap, ok := s["additionalProperties"].(map[string]any); ok {
			walk(ap, where+"{}")
		}
	}
	walk(doc, "")
}

// schemaTypes lists the non-null JSON types a schema allows ("any" for an
// unconstrained one).
func schemaTypes(doc, s map[string]any) []string {
	if ref, ok := s["$ref"].(string); ok {
		defs, _ := doc["$defs"].(map[string]any)
		if d, ok := defs[strings.TrimPrefix(ref, "#/$defs/")].(map[string]any); ok {
			return schemaTypes(doc, d)
		}
		return []string{"object"}
	}
	if alts, ok := s["anyOf"].([]any); ok {
		var out []string
		for _, a := range alts {
			out = append(out, schemaTypes(doc, a.(map[string]any))...)
		}
		return out
	}
	switch x := s["type"].(type) {
	case string:
		if x == "null" {
			return nil
		}
		if x == "integer" {
			return []string{"number"}
		}
		return []string{x}
	case []any:
		var out []string
		for _, e := range x {
			if e != "null" {
				out = append(out, schemaTypes(doc, map[string]any{"type": e})...)
			}
		}
		return out
	}
	return []string{"any"}
}

// schemaDir is where the schema files live, from this package.
var schemaDir = filepath.Join("..", "..", "..", "docs", "schema")
