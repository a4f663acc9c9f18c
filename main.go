// Command semiflow is a Jupyter kernel and script runner for linear evolution
// operators and the semigroups they generate.
//
//	semiflow                      interactive terminal session (REPL)
//	semiflow run FILE             evaluate a script, print each statement's value
//	semiflow kernel CONNECTION    serve the Jupyter messaging protocol
//	semiflow install [flags]      write the kernelspec where Jupyter looks
//	semiflow version              print the version
package main

import (
	"fmt"
	"os"

	"semiflow/lang/display"
)

// version is the semiflow release recorded in outputs and kernel_info.
const version = display.Version

func main() {
	os.Exit(dispatch(os.Args[1:]))
}

func dispatch(args []string) int {
	if len(args) == 0 {
		return cmdRepl()
	}
	switch args[0] {
	case "run":
		return cmdRun(args[1:])
	case "kernel":
		return cmdKernel(args[1:])
	case "install":
		return cmdInstall(args[1:])
	case "version", "--version":
		fmt.Println("semiflow", version)
		return 0
	case "help", "-h", "--help":
		fmt.Print(usage)
		return 0
	}
	fmt.Fprintf(os.Stderr, "semiflow: unknown command %q\n\n%s", args[0], usage)
	return 2
}

const usage = `usage:
  semiflow                      interactive session (REPL)
  semiflow run FILE             evaluate a script (.sf) or notebook (.ipynb)
  semiflow kernel CONNECTION    serve the Jupyter messaging protocol
  semiflow install [--user|--sys-prefix|--prefix DIR] [--name NAME] [--uninstall]
  semiflow version
`
