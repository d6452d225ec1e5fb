package main

import (
	"github.com/spf13/cobra"

	"matgate/schema"
)

func newSchemaCmd(e *env) *cobra.Command {
	return &cobra.Command{
		Use:   "schema",
		Short: "Print the JSON Schema of matgate.card/1 (for editors)",
		Args:  cobra.NoArgs,
		RunE: func(*cobra.Command, []string) error {
			_, err := e.stdout.Write(schema.Schema())
			return err
		},
	}
}
