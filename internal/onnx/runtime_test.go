package onnx

import (
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func TestFindLibrary(t *testing.T) {
	home := t.TempDir()
	t.Setenv("GAINSAY_HOME", home)
	t.Setenv(EnvLibrary, "")
	_, err := FindLibrary("")
	require.ErrorIs(t, err, ErrNoRuntime)
	assert.Contains(t, err.Error(), "scripts/install-onnxruntime", "says how to install it")
	assert.Contains(t, err.Error(), filepath.Join(home, "onnxruntime", "libonnxruntime.so.1"), "says where it looked")

	lib := filepath.Join(home, "onnxruntime", "libonnxruntime.so.1")
	require.NoError(t, os.MkdirAll(filepath.Dir(lib), 0o755))
	require.NoError(t, os.WriteFile(lib, nil, 0o644))
	got, err := FindLibrary("")
	require.NoError(t, err)
	assert.Equal(t, lib, got, "the set-up location")

	other := filepath.Join(home, "other.so")
	require.NoError(t, os.WriteFile(other, nil, 0o644))
	t.Setenv(EnvLibrary, other)
	got, err = FindLibrary("")
	require.NoError(t, err)
	assert.Equal(t, other, got, "the environment variable before the set-up location")
	got, err = FindLibrary(lib)
	require.NoError(t, err)
	assert.Equal(t, lib, got, "the flag before everything")
	_, err = FindLibrary(filepath.Join(home, "missing.so"))
	assert.ErrorContains(t, err, "flag")
}
