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
//
// Reach. The realisable values bound (x, y) before anything is searched:
// w0 lies between 1/(Rmax Cmax) and 1/(Rmin Cmin) (extreme realisable
// values), the Sallen-Key low-pass Q = √(Cf/Cg)·√(R1R2)/(R1+R2) between
// √(Cmin/Cmax)·√ρ/(1+ρ), ρ = Rmax/Rmin, and ½√(Cmax/Cmin), and the
// high-pass Q likewise with the kinds swapped. A 1-pole section has x
// only.
//
// Proven regions (region.go). For an error level B the set {E <= B} is
// enclosed without tracing it: the reachable rectangle is cut into cells,
// and for each cell an interval evaluation of the ideal section,
// |H|² = 1/((1-u²)² + u²/Q²) with u = w/w0 (w0/w for a high-pass), or
// 1/(1+u²) for a 1-pole, gives at every grid point of a subset an interval
// holding the gain of every section in the cell ((1-u²)² is bounded by its
// values at the ends of the u interval, and by 0 when the interval holds
// 1). The distance from that interval to the target's gain bounds the
// error from below anywhere in the cell. Cells whose bound exceeds B are
// dropped, the others split, until the kept cells are 1/32 of the kept
// extent. A point with E <= B is in a kept cell at every step, so the
// rectangle around the kept cells holds the whole set (a subset of the grid
// only enlarges it). When no cell is kept at the section ceiling (6 dB),
// the fit answers at once that nothing in stock comes near, with the
// reachable f0 and Q.
//
// The box walk. The capacitors are enumerated (every ordered pair for a
// Sallen-Key low-pass; pairs with C1 >= C2 for the high-pass, whose
// response is symmetric in C1 and C2). For given capacitors the rectangle
// bounds the resistors exactly: for the low-pass, w0² = 1/(R1 R2 Cf Cg) and
// Q = √(R1 R2 Cf Cg)/(Cg (R1+R2)) bound the product and the sum of the
// resistors, hence R1 (the larger, by symmetry) and, for each R1, R2; for
// the high-pass they bound Rf·Rg and Rg/Rf. The realisable values inside
// those bounds are found by binary search in the sorted arrays, and each
// candidate is scored: a few probe frequencies first (a lower bound of the
// grid maximum), then the whole grid. A 1-pole section is the same in one
// dimension. A window that serves several part-count classes is the hull of
// their rectangles.
//
// Shortlists (the first phase). Each section keeps, for every part count,
// the Shortlist best candidates by error, entering only if also among the
// Shortlist best of all candidates with no more parts. A seeding pass
// offers the nearest values to the exact solution for every single-part
// capacitor choice. When the seeding leaves a class unfilled, the walk
// runs in passes at error levels 0.01, 0.04, 0.16, 0.64, 2.56 and 6 dB,
// each enumerating the rectangle of its level but skipping every point
// inside the previous pass's rectangle (those were scored then, against an
// entry limit that only falls), so no assignment is scored twice. An
// evaluation budget per section (Options.SectionBudget) bounds the work;
// when it trips the result says the list is not proven exact.
//
// A 3-pole section has three free coefficients. Every triple of single-part
// capacitors (or pairs too when 3-pole capacitor pairs are enabled) whose
// product admits resistors in range is solved exactly for its resistors
// (synth Topology.Solve); the two realisable resistors on each side of each
// solved value are then tried; with at most 40 realisable resistor values
// every resistor triple is tried instead. This is a heuristic: designs
// with a 3-pole section are never reported as proven.
//
// # Across sections
//
// The candidates' signed deviation curves add up: the cascade's error is the
// largest |Σ deviations| over the grid. A depth-first branch and bound over
// the sections' lists keeps the best Top combinations by the ranking key. A
// partial assignment is pruned when a lower bound of its key cannot beat
// the worst listed one: the error bound adds, at each grid point, the range
// of deviations the remaining sections' lists can contribute; the part
// count bound adds their smallest part counts; unique parts only grow.
// Quantities are counted over the whole design (a row used in three places
// needs three parts per board) and the specification is applied at the
// leaves. The search is exact over the product of the lists it is given; a
// node budget stops a runaway search, and the result then says so.
//
// # Exactness (the second phase, exact.go)
//
// Claim. For the error and the balanced rankings, when Result.Proven is
// true, the first candidate's key is the smallest over every assignment of
// realisable values (single parts and, with pairs on, every pair in series
// or parallel) to every position of every searched design, with quantities
// counted over the whole design and the boards, among the designs that meet
// the specification and whose sections are each within the section ceiling
// (6 dB) of their own target sections. (The ceiling is the product's rule
// that a section further off is of no use; the reach test applies it.)
//
// Bound. Let the incumbent be the best listed design that meets the
// specification, with error e and p parts. A design that ranks before it
// has cascade error at most B, where B = e for the error ranking; for the
// balanced ranking B = GoodEnough and at most p parts when e <= GoodEnough,
// else B = e. (The parts and unique-parts rankings give no error bound and
// are never proven.) When nothing listed meets the specification, every
// design is searched at B = 6 dB times its number of sections, which no
// design within the ceiling can exceed, and then again at the bound of what
// that finds.
//
// Regions. With d_s(g; x_s, y_s) the deviation of section s at grid point
// g, a design with error <= B has |Σ_s d_s(g)| <= B at every g. An interval
// branch and bound over the joint parameters (one cell per section; the
// interval bounds above give each d_s an interval per point) drops a joint
// box when at some point of the grid subset the sum of the intervals lies
// outside [-B, B], keeps it whole when the sums lie inside or the intervals
// are narrower than B, and otherwise halves the cell whose interval is
// widest. Every joint point of a design with error <= B is in a kept box,
// so the rectangle around each section's kept cells holds every value of
// that section which some values of the others bring within B. Two
// sections of the same topology can trade their values without changing
// the cascade or its parts, so only the order in which their Q follow the
// targets' Q is searched.
//
// Enumeration. Every realisation inside each section's rectangle is
// enumerated by the same box walk with the rectangle fixed (no shortlist
// cut) and kept when its quantities fit, its own error is within the
// ceiling, and at every point of the subset its deviation lies in
// [-B - Σ_o hi_o, B - Σ_o lo_o], the room the other sections' kept cells
// leave (necessary). In a 1-pole + 2-pole design each 2-pole candidate is
// then tested exactly against every 1-pole: the 1-pole's gain at each grid
// point is monotone in its w0, so each point allows an interval of w0 and
// the candidate is kept only if they meet (and, with a part budget, a
// realisable 1-pole of the allowed part count lies inside); the 1-pole's
// candidates are then only those whose w0 lies in the union of those
// intervals. With a part budget each section may use at most the budget
// less the other sections' minimum part counts.
//
// Combination. The combiner runs again over the union of the shortlists and
// the enumerated sets, limited to combinations within B and the part
// budget; the last section is visited through windows of its candidates
// sorted by their deviation at the point where they spread most (grouped
// by part count). Every design that could rank first is a product of
// enumerated candidates, so the first listed is the optimum.
//
// Limits. The joint branch and bound grows steeply with the number of
// sections (two parameters per 2-pole); it is run for designs of at most
// two sections (orders 1 to 4 and 3 as 1-pole + 2-pole). Larger designs,
// 3-pole sections, an amplifier with finite gain-bandwidth (predistorted
// targets approximate its effect), a region holding more than 50 000
// candidates or 1 000 000 scored assignments per worker, or a combiner
// past its node budget make the result say "not proven exact" and name the
// design. TestFitExactOnRandomDrawers compares the fit with an independent
// enumeration on random small drawers (drawer_test.go).
//
// Combinations with the same element values (the same circuit from other
// rows) are listed once, the one with tighter tolerances first. The list is
// deterministic: ties are broken by tolerance, design and list order.
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
