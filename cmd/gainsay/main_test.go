package main

import (
	"bytes"
	"os"
	"strconv"
	"path/filepath"
	"testing"

	"github.com/rogpeppe/go-internal/testscript"
)

func TestMain(m *testing.M) {
	testscript.Main(m, map[string]func(){
		"gainsay": func() { os.Exit(run(os.Args[1:], os.Stdin, os.Stdout, os.Stderr)) },
	})
}

// TestScripts runs the CLI scripts in testdata/script. $TINY and $TINYBPE are nli's test models, whose
// outputs are known functions of their input (scripts/reference/make_tiny_models.py), so the golden
// records are exact. GAINSAY_UPDATE_GOLDEN=1 rewrites the golden files in the scripts.
func TestScripts(t *testing.T) {
	tiny, err := filepath.Abs("../../nli/testdata/tiny-wordpiece")
	if err != nil {
		t.Fatal(err)
	}
	tinyBPE, _ := filepath.Abs("../../nli/testdata/tiny-bpe")
	deploy, _ := filepath.Abs("../../deploy")
	testscript.Run(t, testscript.Params{
		Dir:                 "testdata/script",
		RequireExplicitExec: true,
		UpdateScripts:       os.Getenv("GAINSAY_UPDATE_GOLDEN") == "1",
		Cmds: map[string]func(ts *testscript.TestScript, neg bool, args []string){
			// cutlines SRC DST N K: DST is the first N lines of SRC and K bytes of the next (a killed write).
			"cutlines": func(ts *testscript.TestScript, neg bool, args []string) {
				if len(args) != 4 {
					ts.Fatalf("usage: cutlines src dst lines bytes")
				}
				n, err1 := strconv.Atoi(args[2])
				k, err2 := strconv.Atoi(args[3])
				if err1 != nil || err2 != nil {
					ts.Fatalf("cutlines: lines and bytes must be numbers")
				}
				data := []byte(ts.ReadFile(args[0]))
				at := 0
				for i := 0; i < n; i++ {
					at += bytes.IndexByte(data[at:], '\n') + 1
				}
				ts.Check(os.WriteFile(ts.MkAbs(args[1]), data[:min(len(data), at+k)], 0o644))
			},
		},
		Setup: func(e *testscript.Env) error {
			e.Setenv("TINY", tiny)
			e.Setenv("TINYBPE", tinyBPE)
			e.Setenv("DEPLOY", deploy)
			for _, k := range []string{"GAINSAY_ORT_LIB", "GAINSAY_HOME", "HOME", "XDG_DATA_HOME"} {
				if v, ok := os.LookupEnv(k); ok {
					e.Setenv(k, v)
				}
			}
			return nil
		},
	})
}
