// Package respplot draws the frequency response of a filter design for
// people: the magnitude of the ideal target, of the nominal candidate and of
// an optional Monte Carlo envelope, with the specification's limits; the
// phase; and the group delay. Plots are made with gonum.org/v1/plot and
// written as SVG (for embedding in an HTML page) or PNG.
//
// Every curve is told apart by its line style (solid, dashed, dotted, a
// shaded band), not only by colour, so the plots read the same in
// black-and-white print. The frequency axis is logarithmic with engineering
// tick labels (100 Hz, 1 kHz, 10 kHz).
//
// Sketch draws a compact text picture of the magnitude response for a
// terminal.
//
// The package knows nothing about stock or the fit: a Response carries the
// transfer functions as plain functions of angular frequency, so any caller
// (a fitted candidate, a saved design, a plan) can fill it.
package respplot
