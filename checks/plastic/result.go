package plastic

import (
	"errors"
	"fmt"
)

// Status says how a step or a driver run ended.
type Status int

// Statuses. Success is the zero value.
const (
	Success          Status = iota
	Canceled                // the context was canceled between increments
	NotConverged            // an iteration did not converge, cutbacks exhausted
	BeyondSaturation        // a stress target the material cannot carry
	InvalidInput            // a bad path, increment size or non-finite input
)

// Sentinel errors, one per unsuccessful Status; match with errors.Is.
var (
	ErrCanceled         = errors.New("plastic: canceled")
	ErrNotConverged     = errors.New("plastic: iteration did not converge")
	ErrBeyondSaturation = errors.New("plastic: stress target beyond the saturation stress")
	ErrInvalidInput     = errors.New("plastic: invalid input")
)

// String returns the status name.
func (s Status) String() string {
	switch s {
	case Success:
		return "success"
	case Canceled:
		return "canceled"
	case NotConverged:
		return "not-converged"
	case BeyondSaturation:
		return "beyond-saturation"
	case InvalidInput:
		return "invalid-input"
	}
	return fmt.Sprintf("Status(%d)", int(s))
}

// Err returns nil for Success and the status's sentinel error otherwise.
func (s Status) Err() error {
	switch s {
	case Success:
		return nil
	case Canceled:
		return ErrCanceled
	case NotConverged:
		return ErrNotConverged
	case BeyondSaturation:
		return ErrBeyondSaturation
	case InvalidInput:
		return ErrInvalidInput
	}
	return fmt.Errorf("plastic: unknown status %d", int(s))
}

// StepInfo says what one step did.
type StepInfo struct {
	Plastic    bool    // the step yielded
	DP         float64 // increment of accumulated plastic strain p
	Iterations int     // scalar iterations on dp, summed over substeps
	Substeps   int     // return mappings performed (1D: 1; 3D Exact: more on non-proportional increments)
	Tangent    float64 // 1D only: consistent (algorithmic) tangent d sigma / d eps, Pa

	budget int // 3D substepping: the most return mappings allowed
}

// Result says what a driver run did. The increment sizes are inputs and are
// recorded here so that a report can state them.
type Result struct {
	Status             Status
	Increments         int     // increments completed (after cutbacks, each sub-increment counts)
	NewtonIterations   int     // driver Newton iterations (stress or mixed control)
	StepIterations     int     // return-mapping iterations, summed
	Substeps           int     // return mappings performed, summed
	Cutbacks           int     // increment halvings after a Newton failure
	MaxStrainIncrement float64 // the strain increment bound used (input)
	MaxStressIncrement float64 // the stress increment bound used (input), Pa
}

// Err returns Status.Err().
func (r Result) Err() error { return r.Status.Err() }

// PathError is a driver failure located on the load path. It wraps the
// status's sentinel error.
type PathError struct {
	Status    Status
	Segment   int     // index of the segment (0-based)
	Increment int     // increment index counted over the whole path (0-based)
	Detail    string  // what failed
	Value     float64 // a value that explains it (residual, target), or 0
}

func (e *PathError) Error() string {
	return fmt.Sprintf("plastic: segment %d, increment %d: %s (%g): %v",
		e.Segment, e.Increment, e.Detail, e.Value, e.Status.Err())
}

// Unwrap returns the status's sentinel error.
func (e *PathError) Unwrap() error { return e.Status.Err() }
