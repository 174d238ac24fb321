// Package optimize fits an ideal filter design to the parts on hand: it
// searches the stock for the buildable designs closest to the ideal response
// and ranks them by response error, part count and unique parts.
//
// # What is searched
//
// The usable stock rows (kind, value range, dielectric, enough parts for the
// asked boards) give the realisable values of each kind: every row alone and,
// with pairs on, every two rows (or two parts of one row) in series and in
// parallel. Values are kept sorted, and also split into single parts and
// pairs so that each class has its own entry threshold.
//
// For every order from the minimum to the maximum asked, and for both
// arrangements of an odd order, synth gives the ideal sections. Each section
// is searched on its own; the sections are then combined.
//
// # One section
//
// A 2-pole section's response depends only on its natural frequency w0 and
// its Q, so its error against the target section (largest |dB difference| on
// the scoring grid) is a function E(x, y) of x = ln(w0/w0t), y = ln(Q/Qt).
// For an error level B the region E < B is traced along 48 rays from the
// target by bisection, on a subset of the grid (which can only enlarge the
// region), and enclosed in a rectangle widened by 20 %. Levels are spaced by
// √2 from 1e-7 dB and cached.
//
// The capacitors are enumerated (every ordered pair for a Sallen-Key
// low-pass; pairs with C1 >= C2 for the high-pass, whose response is
// symmetric in C1 and C2). For given capacitors the rectangle bounds the
// resistors exactly: for the low-pass, w0² = 1/(R1 R2 Cf Cg) and
// Q = √(R1 R2 Cf Cg)/(Cg (R1+R2)) bound the product and the sum of the
// resistors, hence R1 (the larger, by symmetry) and, for each R1, R2; for the
// high-pass they bound Rf·Rg and Rg/Rf. The realisable values inside those
// bounds are found by binary search in the sorted arrays, and each candidate
// is scored: a few probe frequencies first (a lower bound of the grid
// maximum), then the whole grid. A 1-pole section is the same in one
// dimension. The walk over R1 starts at the exact solution and goes outward,
// and a seeding pass offers the nearest values to the exact solution for
// every single-part capacitor choice first, so that thresholds fall early and
// the boxes shrink; neither changes which candidates qualify.
//
// Each section keeps a shortlist: for every part count, the Shortlist best
// candidates by error, and a candidate enters only if it is also among the
// Shortlist best of all candidates with no more parts (a candidate with more
// parts and more error than that many others is of no use to any ranking).
// The threshold is the worst error so kept; only candidates that cannot beat
// it are skipped, so for 1-pole and 2-pole sections the shortlist is exact.
// The tests compare it with an exhaustive enumeration of every assignment
// on small stocks.
//
// A 3-pole section has three free coefficients. Every triple of single-part
// capacitors (or pairs too when 3-pole capacitor pairs are enabled) whose
// product admits resistors in range is solved exactly for its resistors
// (synth Topology.Solve); the two realisable resistors on each side of each
// solved value are then tried. With at most 40 realisable resistor values
// every resistor triple is tried instead, which is exhaustive. The window is
// a heuristic for larger stocks (with paired resistors the neighbours are
// within a fraction of a percent of the solution).
//
// # Across sections
//
// The candidates' signed deviation curves add up: the cascade's error is the
// largest |Σ deviations| over the grid. A depth-first branch and bound over
// the sections' shortlists keeps the best Top combinations by the ranking
// key. A partial assignment is pruned when a lower bound of its key cannot
// beat the worst listed one: the error bound adds, at each grid point, the
// range of deviations the remaining sections' shortlists can contribute; the
// part count bound adds their smallest part counts; unique parts only grow.
// Quantities are counted over the whole design (a row used in three places
// needs three parts per board) and checked at every step. The search is
// exact over the product of the shortlists; a node budget stops a runaway
// search, and the result then says so. It is not exact over every
// assignment: a cascade can be made of sections that each rank below their
// shortlist's cut and cancel each other's deviations. That matters when the
// stock is thin and the best cascade is poor, so while nothing listed is
// within GoodEnough, a design whose best combination is not either is
// searched again with shortlists eight times as long.
//
// Combinations with the same element values (the same circuit from other
// rows) are listed once, the one with tighter tolerances first. The list is
// deterministic: ties are broken by tolerance, design and shortlist order.
//
// # Ranking
//
// Balanced: candidates with error at most GoodEnough first, by part count,
// unique parts, then error; the others by error. Or purely by error, part
// count or unique parts (ties by the others). Pareto marks the listed
// candidates that no other listed one beats in all three.
//
// # Amplifiers
//
// With Options.Amp every section is scored with the single-pole amplifier
// model A(s) = A0/(1 + s·A0/(2π·GBW)) wired as the topology's follower
// (synth.AmpResponse, the nodal analysis tolerance's op-amp check also
// uses). Errors and attenuations are measured from the follower's DC gain
// A0/(1+A0) per section, against the ideal target. The method:
//
//   - Predistortion (Predistort): each section's pole figures (w0, Q, a
//     3-pole section's real pole) are moved, by a simplex search in their
//     logarithms, so that the handbook realisation built with the
//     amplifier comes nearest the ideal section. Approximate: the
//     amplifier's effect depends on the element ratios, and the handbook's
//     stand in for those the search will choose.
//   - The section search runs unchanged, aimed at the predistorted target.
//   - Its shortlists are scored again with the full model against the ideal
//     target, and the cross-section search combines those figures. Exact on
//     the scoring grid for the shortlisted candidates: every listed
//     candidate's error, attenuations and meets-spec are those of the model.
//     Not exact over all assignments: a candidate the predistorted search
//     did not shortlist is not seen.
//   - In the limit (GBW and A0 very large) the predistorted target is the
//     ideal one and the fit is the ideal-amplifier fit (tested at 1 THz and
//     1e12 V/V).
//
// FitAmps fits once per amplifier (every stock row with a gain-bandwidth,
// a pinned row, or a generic model), assigns the sections to the channels
// of its packages in order (AssignChannels: a 5-section filter on quads
// takes two), counts a stocked amplifier's packages in the part count,
// unique rows, stock use, cost and boards buildable, and merges the lists by
// the ranking. A candidate uses one amplifier row; mixing rows (a quad and a
// single) is not searched. SlowSection names the sections that even the
// fastest amplifier cannot bring within GoodEnough, with the gain-bandwidth
// (bisection to 1 %) at which the predistorted handbook realisation would.
//
// # References
//
// The section formulas, the scaling procedure and the practical value ranges
// are in the project's docs/check-values.md (standard circuit analysis; A. B. Williams
// and F. J. Taylor, Electronic Filter Design Handbook; Texas Instruments, Op
// Amps for Everyone, ch. 16). The branch and bound is the textbook method
// (A. H. Land and A. G. Doig, 1960).
package optimize
