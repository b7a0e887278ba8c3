// Package profile reads character profiles: the character and the facts its replies must not
// contradict, from YAML, JSON or plain text, with errors that name the file, line and field. It knows
// nothing of models, replies or the command line.
package profile
