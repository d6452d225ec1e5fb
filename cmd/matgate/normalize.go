package main

import (
	"bytes"
	"fmt"

	"github.com/spf13/cobra"
	"go.yaml.in/yaml/v3"

	"matgate/convert"
)

func newNormalizeCmd(e *env) *cobra.Command {
	var asYAML bool
	c := &cobra.Command{
		Use:   "normalize FILE|-",
		Short: "Print the canonical (neutral) form of a card",
		Long: `normalize prints the canonical form of a card: SI units, every default
written out, linear terms as plastic modulus, reference files inlined, the
derived block and the digest. The canonical card is itself a valid card,
and normalizing it again changes nothing.`,
		Args: cobra.ExactArgs(1),
		RunE: func(_ *cobra.Command, args []string) error {
			l := loadCard(e, args[0])
			for _, d := range l.diags {
				fmt.Fprintln(e.stderr, d.String())
			}
			if !l.valid() {
				return &exitError{code: exitInvalid}
			}
			out, err := convert.Indented(l.card)
			if err != nil {
				return err
			}
			if asYAML {
				if out, err = jsonToYAML(out); err != nil {
					return err
				}
			}
			_, err = e.stdout.Write(out)
			return err
		},
	}
	c.Flags().BoolVar(&asYAML, "yaml", false, "print YAML instead of JSON (same content, same key order)")
	return c
}

// jsonToYAML re-prints JSON as block-style YAML in the same key order. JSON
// is YAML, so the node tree is the JSON's own; only the style changes.
func jsonToYAML(js []byte) ([]byte, error) {
	var n yaml.Node
	if err := yaml.Unmarshal(js, &n); err != nil {
		return nil, err
	}
	var unflow func(*yaml.Node)
	unflow = func(n *yaml.Node) {
		if !(n.Kind == yaml.SequenceNode && allScalars(n.Content)) {
			n.Style &^= yaml.FlowStyle
		}
		if n.Kind == yaml.ScalarNode && n.Tag == "!!str" {
			n.Style &^= yaml.DoubleQuotedStyle
		}
		for _, c := range n.Content {
			unflow(c)
		}
	}
	unflow(&n)
	var buf bytes.Buffer
	enc := yaml.NewEncoder(&buf)
	enc.SetIndent(2)
	if err := enc.Encode(&n); err != nil {
		return nil, err
	}
	return buf.Bytes(), enc.Close()
}

func allScalars(ns []*yaml.Node) bool {
	for _, n := range ns {
		if n.Kind != yaml.ScalarNode {
			return false
		}
	}
	return true
}
