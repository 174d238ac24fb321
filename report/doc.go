// Package report writes the build sheet of a fitted filter design: one
// self-contained HTML file that a bench technician can build the board
// from, on screen or printed on A4 or Letter paper.
//
// The sheet holds the job in one line (specification, boards, date, stock
// database), the cautions that go with every design, the warnings of the
// fit and of the yield analysis, the magnitude response of the ideal
// target, of the nominal candidate and (when yield was run) the Monte Carlo
// envelope with the specification's limits, the phase and group delay, a
// schematic of every section with designators, values, what each value is
// made of and the bin of every part, the bill of materials (every part
// soldered: the filter's, the bias resistors and the op-amps, each with one
// designator and its role in words), the op-amps with their pins where the
// stock gives a pinout, the pick list grouped by bin location, and the
// SPICE netlist, printed in full. The header says what was checked
// (nominal values, an op-amp model, the yield) and the verdict of each.
//
// Everything is inline: CSS in a <style> element, plots and schematics as
// <svg> elements, no scripts, fonts or images from anywhere else, so the
// file opens offline. The page is written with html/template, so every
// piece of user text (titles, notes, bin locations, labels) is escaped; the
// SVG drawings come from packages respplot and schematic, which escape the
// text they draw.
//
// Callers fill a Sheet (the candidate is required; everything else is
// optional or derived) and call Write or HTML.
package report
