package main

import (
	"fmt"

	"github.com/spf13/cobra"

	"github.com/stepgate/stepgate/acceptance"
	"github.com/stepgate/stepgate/templates"
)

func newSpecCmd() *cobra.Command {
	cmd := &cobra.Command{
		Use:   "spec",
		Short: "Write or check an acceptance spec",
	}
	initCmd := &cobra.Command{
		Use:     "init",
		Short:   "Print the commented spec template",
		Example: "  stepgate spec init > vd25.yaml",
		Args:    cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			_, err := fmt.Fprint(cmd.OutOrStdout(), templates.SpecTemplate)
			return err
		},
	}
	checkCmd := &cobra.Command{
		Use:     "check FILE",
		Short:   "Validate a spec and explain what it will do",
		Example: "  stepgate spec check vd25.yaml",
		Args:    cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			s, err := acceptance.LoadSpec(args[0])
			if err != nil {
				return usageErr(err)
			}
			fmt.Fprintf(cmd.OutOrStdout(), "%s: valid (sha256 %s)\n\n%s", args[0], s.SHA256, s.Explain())
			return nil
		},
	}
	cmd.AddCommand(initCmd, checkCmd)
	return cmd
}
