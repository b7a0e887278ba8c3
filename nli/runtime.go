package nli

import "github.com/gainsay/gainsay/internal/onnx"

// EnvLibrary names the environment variable that points at the ONNX Runtime shared library.
const EnvLibrary = onnx.EnvLibrary

// RuntimeVersion reports the loaded ONNX Runtime's version ("" before a model is opened).
func RuntimeVersion() string { return onnx.RuntimeVersion() }
