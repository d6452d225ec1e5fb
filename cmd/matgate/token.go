package main

import (
	"fmt"
	"regexp"
	"slices"
	"strings"

	"github.com/spf13/cobra"

	"matgate/worker"
)

var tokenName = regexp.MustCompile(`^[a-z0-9][a-z0-9._-]{0,63}$`)

func newTokenCmd(e *env) *cobra.Command {
	c := &cobra.Command{
		Use:   "token",
		Short: "Create API tokens",
	}
	var scopes string
	mk := &cobra.Command{
		Use:   "new NAME",
		Short: "Print a new API token once, and its configuration entry",
		Long: `token new prints a fresh token and the auth.tokens entry for serve's
configuration. The configuration keeps only the token's sha256, so the
token itself is shown this once: put it in your CI's secret store and hand
it to matgate submit as MATGATE_TOKEN.`,
		Args: cobra.ExactArgs(1),
		RunE: func(_ *cobra.Command, args []string) error {
			if !tokenName.MatchString(args[0]) {
				return invalid("token name %q: use lower-case letters, digits, '.', '_' and '-' (at most 64)", args[0])
			}
			var list []string
			for _, s := range strings.Split(scopes, ",") {
				s = strings.TrimSpace(s)
				if s != worker.ScopeSubmit && s != worker.ScopeRead {
					return invalid("--scopes: unknown scope %q; use submit and/or read", s)
				}
				if !slices.Contains(list, s) {
					list = append(list, s)
				}
			}
			secret, t := worker.NewToken(args[0], list)
			fmt.Fprintf(e.stdout, "token (shown once; store it as a secret, give it to matgate submit as MATGATE_TOKEN):\n\n  %s\n\n", secret)
			fmt.Fprintf(e.stdout, "add to auth.tokens in serve's configuration:\n\n  - name: %s\n    sha256: %s\n    scopes: [%s]\n", t.Name, t.SHA256, strings.Join(t.Scopes, ", "))
			return nil
		},
	}
	mk.Flags().StringVar(&scopes, "scopes", "submit,read", "comma-separated scopes: submit, read")
	c.AddCommand(mk)
	wrapArgs(mk)
	return c
}
