package main

import (
	"fmt"

	"github.com/spf13/cobra"

	"github.com/stepgate/stepgate/acceptance/spec"
	"github.com/stepgate/stepgate/templates"
)

// specCheckOptions are the options of `stepgate spec check`.
type specCheckOptions struct {
	File string // the spec to check
}

// newSpecCmd declares `stepgate spec` and its subcommands init and check.
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
			return specInit(cmdStreams(cmd))
		},
	}
	checkCmd := &cobra.Command{
		Use:     "check FILE",
		Short:   "Validate a spec and explain what it will do",
		Example: "  stepgate spec check vd25.yaml",
		Args:    oneArg("FILE", "the spec to check"),
		RunE: func(cmd *cobra.Command, args []string) error {
			return specCheck(cmdStreams(cmd), specCheckOptions{File: args[0]})
		},
	}
	cmd.AddCommand(initCmd, checkCmd)
	return cmd
}

// specInit prints the commented spec template.
func specInit(s streams) error {
	_, err := fmt.Fprint(s.out, templates.SpecTemplate)
	return err
}

// specCheck loads o.File and prints its digest and what it will do.
func specCheck(s streams, o specCheckOptions) error {
	spec, err := spec.Load(o.File)
	if err != nil {
		return usageErr(err)
	}
	fmt.Fprintf(s.out, "%s: valid (sha256 %s)\n\n%s", o.File, spec.SHA256, spec.Explain())
	return nil
}
