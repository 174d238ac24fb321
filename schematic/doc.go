// Package schematic draws the circuit of one filter section as SVG from its
// synth.Topology description alone. One layout routine serves every
// topology:
//
//   - the series chain, the elements whose ends are neither ground nor the
//     output, runs left to right from the input terminal to the op-amp's +
//     input (the topology's Plus node);
//   - each shunt element (one end on a chain node, the other on ground "0")
//     hangs below its node to a ground symbol;
//   - each feedback element (one end on a chain node, the other on "out")
//     rises above its node to a rail that runs right to the output;
//   - the unity-gain follower is a triangle whose - input is tied to its
//     output.
//
// Beside every element the drawing writes its board designator, its value,
// what the value is made of (for example "12 kΩ + 3.3 kΩ series") and the
// bin of every part, as the caller supplies them in Labels.
//
// The drawing is meant to be tested by structure, not pixels: every element
// is an SVG group with an id and classes (element, resistor or capacitor)
// and data attributes naming its nodes and the coordinates of its two pins;
// wires are polylines of class "wire" with a data-net attribute; terminals,
// grounds and the op-amp carry their pin coordinates too. A test can rebuild
// the netlist from the geometry and compare it with the topology.
//
// All caller-supplied text is XML-escaped, so the SVG can be placed inside
// an HTML page as it is.
package schematic
