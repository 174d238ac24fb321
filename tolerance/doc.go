// Package tolerance estimates how many boards of a fitted design pass their
// specification when built from real parts, why the others fail, and
// whether an op-amp is fast enough; it also gives a bench technician's
// practical warnings and the bias-current compensation resistors.
//
// # Monte Carlo yield (Run)
//
// Every physical part of the candidate (both parts of a series or parallel
// pair) is drawn independently: value = nominal·(1 + tol·d), with d uniform
// on [-1, 1] (Uniform, the default: nothing is assumed about the maker's
// distribution, which may have had the best parts sorted out) or normal
// with standard deviation 1/3 (Normal: the tolerance is 3 sigma, so 0.27 %
// of parts lie outside it), using gonum's stat/distuv. Combinations are
// built from their drawn parts (synth.PartKind.Combine) and each section's
// transfer function comes from its topology's closed form, so a trial is
// analysed exactly, with no linearisation.
//
// A trial is judged against the specification on a normalised axis where
// the passband is 0..fp (a high-pass is mirrored):
//   - Butterworth and Bessel: the largest attenuation in the passband,
//     relative to the passband gain (exactly 1 at DC, or at infinite
//     frequency for a high-pass, whatever the parts), must be at most
//     Ap + pass margin. For a monotonic response that is the attenuation at
//     fp.
//   - Chebyshev: fp is the ripple-band edge and Ap the ripple, so the
//     passband figure is the ripple: the largest minus the smallest gain up
//     to fp. Note that with exact parts a Chebyshev design sits on this
//     limit by construction.
//   - The attenuation at fs (relative to the passband gain) must be at least
//     As - stop margin. Beyond every section's natural frequency each
//     section's gain falls monotonically, so fs is the stopband's worst
//     point; when a natural frequency lies in the stopband the stopband is
//     scanned as well.
//
// The passband extremes are found on a sine-spaced grid of 8 points per
// pole, refined by golden-section search; the edge (-3 dB point, or for
// Chebyshev the frequency where the gain falls Ap below its passband
// maximum) by bracketing and bisection.
//
// The yield is reported with the Wilson score 95 % interval, with the
// percentiles of the edge frequency, of the passband figure, of the
// attenuation at fs and of every section's f0 and Q.
//
// Reproducibility: trial i always draws from its own PCG stream keyed by
// (seed, i), so results depend only on the seed and the trial count, never
// on the number of workers or on scheduling, and two runs that differ only
// in tolerances see the same deviations (common random numbers). Trials
// are split into contiguous blocks over Options.Workers goroutines.
//
// Widening a tolerance lowers the yield (or leaves it) when the nominal
// board sits inside the acceptance window: for a window convex and
// symmetric about nominal that is Anderson's theorem (Proc. AMS 6, 1955),
// and the package tests it as a property. It is not a law for a nominal
// that sits on a limit: there about half the boards fail whatever the
// tolerances, and the curvature of the limit can tip the balance either
// way (an 8th-order Butterworth judged at its own edge, seed 77, 3,000
// trials, gains 1.4 % of yield, some two standard errors, when one Cg goes
// from 5 % to 10 %). That is one more reason to move such an edge inside
// the specification.
//
// # Blame and advice
//
// Each failing trial carries a weight of one, shared among components:
// every component is reset, alone, to its nominal value and the trial
// re-analysed. If some resets make the trial pass, those components share
// the weight equally; otherwise the weight is split in proportion to how
// much each reset reduces the violation (the distance outside the window
// in dB); if no single reset helps, the trial stays unattributed. A
// component's share is its summed weight over the number of failures; the
// shares and Result.Unattributed add up to one. The method answers the
// bench question "which part, had it been exact, would have saved this
// board", and it sees interactions that a variance decomposition of a
// linearised response would miss.
//
// The advice is computed, not guessed: for the (up to two) components with
// the largest shares the Monte Carlo is re-run with the same seed and that
// component's parts tightened through the standard IEC 60062 tolerances
// (10, 5, 2, 1, 0.5, 0.25, 0.1 %) until the target yield is reached. From
// the trials' excesses over the limits the package also reports the
// acceptance window that would give the target yield (both limits widened
// alike, or one alone), and says plainly when the nominal response sits on
// a limit (within a tenth of the 5-95 % spread), as a Butterworth edge
// placed at fp does by construction.
//
// With Options.Refit (supplied by the fit) and stopband slack, a design
// whose target sits on the edge (saved before, or fitted with
// synth.PlaceEdge) is fitted again by the default fit path (Refitter:
// FitByYield) with its target placed inside the specification
// (synth.PlaceInside) at the same order and arrangement, and the new
// candidate is judged against the original specification.
//
// A part whose stock row gives no tolerance (0) is simulated with
// DefaultTolerance (5 % for a capacitor, 1 % for a resistor; common
// practice, no source), and the result names it in a warning.
//
// # Ranking by yield (RankByYield, FitByYield)
//
// FitByYield asks the search (optimize.Fit) for PoolSize candidates by the
// balanced ranking whose good-enough error is widened to a third of the
// target's smaller design margin, so that the pool holds the fewest-part
// candidates whose error the margins absorb. RankByYield screens every one
// with DefaultScreenTrials trials, orders them by the ranking key with the
// screening estimates (a candidate counts as reaching the target when its
// screening interval does), confirms the best Top + Top/2 with the full
// Monte Carlo, and lists the confirmed ones: first those whose yield
// reaches the target, by part count, unique parts, then yield; then the
// rest by yield. All estimates use the same per-trial streams (common
// random numbers), so differences between candidates are not noise of
// different draws, and the result does not depend on the number of
// workers. When no candidate of the minimum order reaches the target, the
// higher orders the fit considered are searched on their own and ranked
// with it.
//
// # Worst case and sensitivities
//
// Normalised sensitivities S = ∂ln y/∂ln x of each section's f0 and Q (and
// a 3-pole section's real pole) to each component come from central
// differences (step 1e-6) of the exact closed-form coefficients; the pole
// data of a 3-pole section come from its cubic (real root by bisection and
// Newton, then deflation). The worst-case corners put every part at a limit
// of its tolerance. With at most MaxExactCorners (16) parts all 2^n corners
// are evaluated exactly, in Gray-code order so that each step re-analyses
// one section, and the figures are the true extremes over the corners
// (tested against a from-scratch enumeration). With more parts each
// figure's corner takes every part in the direction, found from the sign
// of a central difference, that hurts the figure most: a sensitivity
// estimate, labelled as such, not a bound (interactions between parts can
// make another corner worse).
//
// # Op-amp (CheckOpAmp, SectionResponse)
//
// Each section is solved by modified nodal analysis built from its
// topology's element list with a single-pole op-amp follower
// A(s) = A0/(1 + s/ωa), ωa = 2π·GBW/A0, the model synth.Netlist writes.
// With an ideal op-amp it reproduces the closed forms; with the model it
// agrees with synth.AnalyzeNetlist and with ngspice on the same netlist
// (tests). The report gives the response change on the fit's scoring band
// and warns when a section's gain-bandwidth is below the rule of Op Amps
// for Everyone (Texas Instruments SLOD006B), section 16.8.4 (GBWRule).
//
// # Practical checks (Practical, BiasResistors)
//
// Resistors below about 1 kΩ or above a few hundred kΩ, capacitors below
// about 100 pF and class-2 ceramic dielectrics are flagged (common
// practice, no source). BiasResistors gives the DC resistance at each
// follower's + input (capacitors open, source and output at 0 V), the
// value of the optional bias-current compensation resistor for
// bipolar-input op-amps.
//
// All results are small-signal estimates; see Caution.
package tolerance
