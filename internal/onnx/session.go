package onnx

import (
	"errors"
	"fmt"
	"slices"
	"sync"
	"sync/atomic"
	"time"

	ort "github.com/yalue/onnxruntime_go"
)

// Session is an encoder model loaded into ONNX Runtime. It is safe for concurrent use, Close included.
type Session struct {
	mu      sync.RWMutex // held for reading by every Run, for writing by Close
	s       *ort.DynamicAdvancedSession
	inputs  []string // the inputs the model takes, in the order passed to Run
	output  string
	width   int          // columns of the output
	runNano atomic.Int64 // time inside Run, for benchmarks
	rows    atomic.Int64 // rows run
	tokens  atomic.Int64 // real tokens run
	cells   atomic.Int64 // tokens and padding run
}

// Open loads model data. The output is the one named want, else the model's only output; it must be
// float32 of shape [batch, width].
func Open(data []byte, want string, width, threads int) (*Session, error) {
	ins, outs, err := ort.GetInputOutputInfoWithONNXData(data)
	if err != nil {
		return nil, err
	}
	s := &Session{width: width}
	have := map[string]bool{}
	for _, in := range ins {
		switch in.Name {
		case "input_ids", "attention_mask", "token_type_ids":
			if in.DataType != ort.TensorElementDataTypeInt64 {
				return nil, fmt.Errorf("input %s is %v; want int64", in.Name, in.DataType)
			}
			s.inputs = append(s.inputs, in.Name)
			have[in.Name] = true
		default:
			return nil, fmt.Errorf("input %q is not one of input_ids, attention_mask, token_type_ids", in.Name)
		}
	}
	if !have["input_ids"] || !have["attention_mask"] {
		return nil, errors.New("the model must take input_ids and attention_mask")
	}
	for _, o := range outs {
		if o.Name == want {
			s.output = o.Name
		}
	}
	if s.output == "" {
		if len(outs) != 1 {
			return nil, fmt.Errorf("no output named %s among %d outputs", want, len(outs))
		}
		s.output = outs[0].Name
	}
	for _, o := range outs {
		if o.Name != s.output {
			continue
		}
		if o.DataType != ort.TensorElementDataTypeFloat {
			return nil, fmt.Errorf("output %s is %v; want float32", o.Name, o.DataType)
		}
		if d := o.Dimensions; len(d) != 2 || (d[1] > 0 && int(d[1]) != width) {
			return nil, fmt.Errorf("output %s has shape %v; want [batch, %d]", o.Name, d, width)
		}
	}
	so, err := ort.NewSessionOptions()
	if err != nil {
		return nil, err
	}
	defer so.Destroy()
	if threads > 0 {
		if err := so.SetIntraOpNumThreads(threads); err != nil {
			return nil, err
		}
	}
	if s.s, err = ort.NewDynamicAdvancedSessionWithONNXData(data, s.inputs, []string{s.output}, so); err != nil {
		return nil, err
	}
	return s, nil
}

// Inputs are the names of the inputs the model takes.
func (s *Session) Inputs() []string { return slices.Clone(s.inputs) }

// Row is one input sequence: token ids and token type ids (nil: all 0).
type Row struct {
	IDs, TypeIDs []int64
}

// Run runs rows as one batch, each padded with pad to the longest, and returns the output, width
// values per row.
func (s *Session) Run(rows []Row, pad int64) ([]float32, error) {
	s.mu.RLock()
	defer s.mu.RUnlock()
	if s.s == nil {
		return nil, errors.New("model is closed")
	}
	b, n := len(rows), 1
	for _, r := range rows {
		n = max(n, len(r.IDs))
	}
	shape := ort.NewShape(int64(b), int64(n))
	values := make([]ort.Value, 0, len(s.inputs))
	defer func() {
		for _, v := range values {
			v.Destroy()
		}
	}()
	for _, name := range s.inputs {
		data := make([]int64, b*n)
		for i, r := range rows {
			row := data[i*n : (i+1)*n]
			switch name {
			case "input_ids":
				copy(row, r.IDs)
				for k := len(r.IDs); k < n; k++ {
					row[k] = pad
				}
			case "attention_mask":
				for k := range r.IDs {
					row[k] = 1
				}
			case "token_type_ids":
				copy(row, r.TypeIDs)
			}
		}
		t, err := ort.NewTensor(shape, data)
		if err != nil {
			return nil, err
		}
		values = append(values, t)
	}
	outputs := []ort.Value{nil}
	start := time.Now()
	err := s.s.Run(values, outputs)
	s.runNano.Add(int64(time.Since(start)))
	s.rows.Add(int64(b))
	s.cells.Add(int64(b * n))
	for _, r := range rows {
		s.tokens.Add(int64(len(r.IDs)))
	}
	if err != nil {
		return nil, fmt.Errorf("onnxruntime: %w", err)
	}
	defer outputs[0].Destroy()
	out, ok := outputs[0].(*ort.Tensor[float32])
	if !ok {
		return nil, fmt.Errorf("onnxruntime: output is %T, want float32 tensor", outputs[0])
	}
	if sh := out.GetShape(); len(sh) != 2 || sh[0] != int64(b) || sh[1] != int64(s.width) {
		return nil, fmt.Errorf("onnxruntime: output shape %v, want [%d %d]", sh, b, s.width)
	}
	return slices.Clone(out.GetData()), nil
}

// RunTime is the total time spent inside ONNX Runtime's Run so far.
func (s *Session) RunTime() time.Duration { return time.Duration(s.runNano.Load()) }

// Rows is the number of rows run so far.
func (s *Session) Rows() int64 { return s.rows.Load() }

// Padding is the share of the tokens run so far that were padding.
func (s *Session) Padding() float64 {
	if c := s.cells.Load(); c > 0 {
		return 1 - float64(s.tokens.Load())/float64(c)
	}
	return 0
}

// Close releases the session once the runs in progress are done; later runs fail.
func (s *Session) Close() error {
	s.mu.Lock()
	defer s.mu.Unlock()
	if s.s == nil {
		return nil
	}
	err := s.s.Destroy()
	s.s = nil
	return err
}
