package synth

// Kind is the response type of a filter: low-pass or high-pass.
type Kind uint8

const (
	// LowPass passes frequencies below the edge.
	LowPass Kind = iota
	// HighPass passes frequencies above the edge.
	HighPass
)

func (k Kind) String() string {
	if k == HighPass {
		return "highpass"
	}
	return "lowpass"
}
