package main

import (
	"fmt"
	"runtime"

	"github.com/spf13/pflag"
)

const version = "0.1.0-dev"

func init() {
	register(&command{
		Name:    "version",
		Short:   "which warmfit this is, and the Go toolchain that built it",
		Usage:   "warmfit version",
		Long:    "One line: the warmfit release, then the Go toolchain, operating system and\narchitecture of this build.",
		Example: "warmfit version",
		Flags:   func(fs *pflag.FlagSet) {},
		// It prints no warnings, so --strict would mean nothing.
		NoStrict: true,
		Run: func(env *runEnv, args []string) error {
			if len(args) > 0 {
				return usagef("version takes no arguments")
			}
			fmt.Fprintf(env.Stdout, "warmfit %s (%s, %s/%s)\n", version, runtime.Version(), runtime.GOOS, runtime.GOARCH)
			return nil
		},
	})
}
