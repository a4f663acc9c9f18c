package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"os"
	"time"

	"semiflow/install"
	"semiflow/kernel"
	"semiflow/kernel/wire"
	"semiflow/lang/builtin"
	"semiflow/lang/run"
	"semiflow/lang/syntax"
)

// langEvaluator adapts a language session to the kernel's Evaluator.
type langEvaluator struct{ s *run.Session }

func (e langEvaluator) Execute(ctx context.Context, code string, out kernel.Output) (map[string]any, map[string]any, error) {
	data, md, err := e.s.Execute(ctx, code, out)
	if err != nil {
		err = colouredError{err}
	}
	return data, md, err
}

// colouredError presents a language error to the notebook: its traceback
// in syntax.Coloured (front ends render ANSI colours in error outputs).
type colouredError struct{ error }

func (e colouredError) Unwrap() error       { return e.error }
func (e colouredError) ErrorName() string   { return errorNameOf(e.error) }
func (e colouredError) Traceback() []string { return colouredTraceback(e.error) }

func (e langEvaluator) Complete(code string, cursor int) ([]string, int, int) {
	return e.s.Complete(code, cursor)
}

func (e langEvaluator) Inspect(code string, cursor, detail int) (map[string]any, bool) {
	return e.s.Inspect(code, cursor, detail)
}

func (e langEvaluator) IsComplete(code string) (string, string) { return e.s.IsComplete(code) }

// cmdKernel serves the Jupyter messaging protocol on the sockets named by
// a connection file: semiflow kernel CONNECTION_FILE.
func cmdKernel(args []string) int {
	fs := flag.NewFlagSet("kernel", flag.ContinueOnError)
	fs.Usage = func() { fmt.Fprintln(os.Stderr, "usage: semiflow kernel CONNECTION_FILE") }
	if err := fs.Parse(args); err != nil {
		return 2
	}
	if fs.NArg() != 1 {
		fs.Usage()
		return 2
	}
	ci, err := wire.ReadConnectionFile(fs.Arg(0))
	if err != nil {
		fmt.Fprintln(os.Stderr, "semiflow kernel:", err)
		return 1
	}
	k, err := kernel.New(kernel.Config{
		Conn:            ci,
		Eval:            langEvaluator{run.NewSession()},
		Version:         version,
		Banner:          "Semiflow " + version + " — linear evolution operators and their semigroups",
		HandleInterrupt: true,
	})
	if err != nil {
		fmt.Fprintln(os.Stderr, "semiflow kernel:", err)
		return 1
	}
	// A kernel whose parent (the notebook server) has gone exits too.
	ctx, orphaned := context.WithCancelCause(context.Background())
	defer orphaned(nil)
	go kernel.WatchParent(ctx, time.Second, func(why string) { orphaned(errors.New(why)) })
	if _, err := k.Run(ctx); err != nil {
		if cause := context.Cause(ctx); cause != nil && !errors.Is(cause, context.Canceled) {
			fmt.Fprintf(os.Stderr, "semiflow kernel: %v; exiting\n", cause)
			return 0
		}
		fmt.Fprintln(os.Stderr, "semiflow kernel:", err)
		return 1
	}
	return 0
}

// cmdInstall writes or removes the kernelspec:
// semiflow install [--user|--sys-prefix|--prefix DIR] [--name NAME] [--uninstall].
func cmdInstall(args []string) int {
	fs := flag.NewFlagSet("install", flag.ContinueOnError)
	user := fs.Bool("user", false, "install for the current user (~/.local/share/jupyter; the default)")
	sys := fs.Bool("sys-prefix", false, "install into the active environment (VIRTUAL_ENV or CONDA_PREFIX, else /usr/local)")
	prefix := fs.String("prefix", "", "install into `DIR`/share/jupyter")
	name := fs.String("name", "semiflow", "kernelspec `NAME`")
	uninstall := fs.Bool("uninstall", false, "remove the kernelspec instead (searches JUPYTER_PATH too)")
	if err := fs.Parse(args); err != nil {
		return 2
	}
	if fs.NArg() != 0 {
		fmt.Fprintf(os.Stderr, "semiflow install: unexpected argument %q\n", fs.Arg(0))
		return 2
	}
	n := 0
	for _, b := range []bool{*user, *sys, *prefix != ""} {
		if b {
			n++
		}
	}
	if n > 1 {
		fmt.Fprintln(os.Stderr, "semiflow install: choose one of --user, --sys-prefix and --prefix")
		return 2
	}
	o := install.Options{Name: *name, Prefix: *prefix, Words: highlightWords()}
	switch {
	case *sys:
		o.Scope = install.SysPrefix
	case *prefix != "":
		o.Scope = install.Prefix
	}
	if *uninstall {
		dirs, err := install.Uninstall(o)
		if err != nil {
			fmt.Fprintln(os.Stderr, "semiflow install:", err)
			return 1
		}
		for _, d := range dirs {
			fmt.Println("removed", d)
		}
		return 0
	}
	dir, err := install.Install(o)
	if err != nil {
		fmt.Fprintln(os.Stderr, "semiflow install:", err)
		return 1
	}
	fmt.Println("installed kernelspec", *name, "in", dir)
	return 0
}

// highlightWords lists the language's reserved words and builtins for the
// notebook's syntax highlighting (install.KernelJS).
func highlightWords() install.Words {
	var w install.Words
	for k := range syntax.Keywords {
		w.Keywords = append(w.Keywords, k)
	}
	for _, b := range builtin.Default().All() {
		if b.Const != nil {
			w.Constants = append(w.Constants, b.Name)
		} else {
			w.Builtins = append(w.Builtins, b.Name)
		}
	}
	return w
}
