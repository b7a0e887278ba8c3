// Package onnx owns gainsay's use of ONNX Runtime: the process-wide environment (the one piece of
// package-level state in gainsay: the library can be loaded once per process) and sessions of the
// encoder models gainsay runs, which take input_ids, attention_mask and optionally token_type_ids and
// give one float output per row.
package onnx

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"sync"

	ort "github.com/yalue/onnxruntime_go"
)

// The ONNX Runtime environment is process-wide: the one piece of package-level state in gainsay.
var runtime struct {
	sync.Mutex
	lib string
}

// EnvLibrary names the environment variable that points at the ONNX Runtime shared library.
const EnvLibrary = "GAINSAY_ORT_LIB"

// DefaultLibrary is where scripts/install-onnxruntime puts the library:
// $GAINSAY_HOME/onnxruntime/libonnxruntime.so.1, GAINSAY_HOME defaulting to $XDG_DATA_HOME/gainsay or
// ~/.local/share/gainsay.
func DefaultLibrary() string {
	home := os.Getenv("GAINSAY_HOME")
	if home == "" {
		data := os.Getenv("XDG_DATA_HOME")
		if data == "" {
			h, err := os.UserHomeDir()
			if err != nil {
				return ""
			}
			data = filepath.Join(h, ".local", "share")
		}
		home = filepath.Join(data, "gainsay")
	}
	return filepath.Join(home, "onnxruntime", "libonnxruntime.so.1")
}

// ErrNoRuntime is returned when no ONNX Runtime library can be found.
var ErrNoRuntime = errors.New("ONNX Runtime library not found")

// FindLibrary returns the ONNX Runtime library to load: path when given (a flag), else $GAINSAY_ORT_LIB,
// else DefaultLibrary.
func FindLibrary(path string) (string, error) {
	tried := []string{}
	for _, c := range []struct{ what, path string }{
		{"flag", path}, {EnvLibrary, os.Getenv(EnvLibrary)}, {"default location", DefaultLibrary()},
	} {
		if c.path == "" {
			continue
		}
		if st, err := os.Stat(c.path); err == nil && !st.IsDir() {
			return c.path, nil
		}
		if c.what != "default location" {
			// An explicit choice that does not exist is an error, not a reason to look elsewhere.
			return "", fmt.Errorf("%w: %s %s does not exist", ErrNoRuntime, c.what, c.path)
		}
		tried = append(tried, c.path)
	}
	return "", fmt.Errorf("%w (looked in %v); install it with scripts/install-onnxruntime (or `make setup`), or set %s to the path of libonnxruntime.so",
		ErrNoRuntime, tried, EnvLibrary)
}

// InitRuntime loads the ONNX Runtime library once per process. Later calls with the same library (or
// with "", meaning whatever FindLibrary picks) do nothing; a different library is an error, because ONNX
// Runtime cannot be loaded twice.
func InitRuntime(path string) error {
	runtime.Lock()
	defer runtime.Unlock()
	if runtime.lib != "" {
		if path != "" && path != runtime.lib {
			return fmt.Errorf("ONNX Runtime already loaded from %s, cannot switch to %s", runtime.lib, path)
		}
		return nil
	}
	lib, err := FindLibrary(path)
	if err != nil {
		return err
	}
	ort.SetSharedLibraryPath(lib)
	if err := ort.InitializeEnvironment(ort.WithLogLevelError()); err != nil {
		return fmt.Errorf("loading ONNX Runtime from %s: %w", lib, err)
	}
	runtime.lib = lib
	return nil
}

// RuntimeVersion reports the loaded ONNX Runtime's version ("" before InitRuntime).
func RuntimeVersion() string {
	runtime.Lock()
	defer runtime.Unlock()
	if runtime.lib == "" {
		return ""
	}
	return ort.GetVersion()
}
