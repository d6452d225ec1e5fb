// Package schema defines the material card format matgate.card/1: its JSON
// Schema (embedded, and kept as schema/card.schema.json for editors), its Go
// types, and the decoding of YAML and JSON cards into them with every error
// located by file, line, column and JSON pointer.
package schema
