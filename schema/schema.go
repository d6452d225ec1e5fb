package schema

import (
	"bytes"
	_ "embed"
	"encoding/json"
	"fmt"
	"sync"

	"github.com/santhosh-tekuri/jsonschema/v5"
)

//go:embed card.schema.json
var schemaJSON []byte

// schemaID is the $id of card.schema.json.
const schemaID = "urn:matgate:schema:card:1"

// Schema returns the embedded JSON Schema (draft 2020-12) of matgate.card/1,
// the same bytes as schema/card.schema.json. The caller must not modify them.
func Schema() []byte { return schemaJSON }

// compiled holds the compiled schema and its parsed tree; the tree lets the
// error messages read the keyword values (bounds, enums, patterns) that
// failed.
type compiled struct {
	schema *jsonschema.Schema
	tree   any
}

var loadSchema = sync.OnceValues(func() (*compiled, error) {
	c := jsonschema.NewCompiler()
	c.Draft = jsonschema.Draft2020
	c.AssertFormat = true // without it v5 ignores `format` under 2020-12
	if err := c.AddResource(schemaID, bytes.NewReader(schemaJSON)); err != nil {
		return nil, fmt.Errorf("embedded card schema: %w", err)
	}
	s, err := c.Compile(schemaID)
	if err != nil {
		return nil, fmt.Errorf("embedded card schema: %w", err)
	}
	dec := json.NewDecoder(bytes.NewReader(schemaJSON))
	dec.UseNumber()
	var tree any
	if err := dec.Decode(&tree); err != nil {
		return nil, fmt.Errorf("embedded card schema: %w", err)
	}
	return &compiled{schema: s, tree: tree}, nil
})
