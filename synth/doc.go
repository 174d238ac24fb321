// Package synth designs unity-gain active low-pass and high-pass filters
// from a specification: the approximation's poles, their grouping into
// sections, the sections' ideal transfer functions and element values, the
// exact response of sections built from real parts, SPICE netlists of a
// cascade, and an independent nodal analysis of such netlists. It imports
// no CLI, table or database code.
//
// # Specification and order
//
// A Spec gives the passband edge fp with its allowed attenuation Ap and
// either a stopband edge fs with its least attenuation As or an order.
// Attenuation is positive dB relative to the passband gain (DC for a
// low-pass, high frequencies for a high-pass); every section has unity
// passband gain. The minimum order uses the closed forms
//
//	Butterworth: n >= log10((10^(As/10)-1)/(10^(Ap/10)-1)) / (2 log10(fs/fp))
//	Chebyshev I: n >= acosh(sqrt((10^(As/10)-1)/(10^(Ap/10)-1))) / acosh(fs/fp)
//
// (the formulas of scipy.signal's buttord and cheb1ord), followed by a check
// of the analysed design: an even Chebyshev order built from unity-gain
// sections has its DC gain at the ripple minimum, so its attenuation
// relative to DC is the textbook figure less the ripple and may need one
// more order. Bessel filters have no closed form: the order is raised from
// 1 until the design meets the specification. Their attenuation near the
// edge stops growing with the order (at most 14.17 dB at twice the -3 dB
// frequency, n = 6), so some demands are infeasible at any order, which
// MinOrder reports as fault.Infeasible. Orders are limited to 1..MaxOrder.
// With the classical placement (PlaceEdge) a higher order than the minimum
// meets the passband exactly and gives the slack to the stopband;
// Design.Notes says so, with the margin.
//
// # Target placement
//
// With PlaceInside and slack at the order (a stopband limit that the
// classical design beats), the target is centred in the specification
// (Design.Placing). Component tolerances move a built filter mostly in
// frequency, so the target is placed where the whole response can shift
// by the same factor down (until the passband figure reaches Ap at fp) as
// up (until the attenuation at fs falls to As): for Butterworth and Bessel,
// whose shape is fixed, the classical design's frequencies are scaled by
// k = sqrt(ρ/u), where ρ = fs/fp (fp/fs for a high-pass) and u is where
// the classical design reaches As. A Chebyshev response has its ripple r
// free as well: for each r the same frequency centring fixes the edge
// from the closed form A(x) = 10 log10(1 + ε² T_n²(x)), and r is chosen so
// that the dB margins at fp (Ap - r) and fs are equal, or, when the edge
// would fall below fp first, the smallest r that keeps it at fp. Without
// slack (no stopband limit, an order below the minimum, or the unit-delay
// Bessel normalisation) the classical placement is kept and the notes say
// why. The placement depends only on the specification, so plan and fit
// agree; the specification itself is what every candidate is judged
// against.
//
// # Poles
//
// Prototypes are normalised to 1 rad/s. Butterworth poles are
// -sin θk + j cos θk, θk = (2k-1)π/(2n), with -3 dB at 1 rad/s; a passband
// attenuation Ap other than 3.01 dB moves the -3 dB point to
// fp·(10^(Ap/10)-1)^(-1/(2n)). Chebyshev type I poles are
// -sinh(a) sin θk + j cosh(a) cos θk with ε = sqrt(10^(ripple/10)-1) and
// a = asinh(1/ε)/n, with the ripple band ending at 1 rad/s. Bessel poles are
// the roots of the reverse Bessel polynomial
//
//	θn(s) = Σ (2n-k)! / (2^(n-k) k! (n-k)!) s^k
//
// (unit group delay at DC), found as the eigenvalues of its companion
// matrix with gonum's mat package and polished by Newton steps; for the
// default BesselMag normalisation they are scaled so that the -3 dB point
// (or Ap) is exactly at fp; BesselDelay keeps the unit-delay prototype with
// 1 rad/s mapped to fp. A high-pass is the low-pass prototype under
// s -> 1/s: section frequencies mirror about fp and Q is unchanged.
//
// # Gain and topology
//
// Spec.GainDB asks for a passband gain (0..40 dB). It is shared between the
// 2-pole sections in equal parts in dB; first-order RC sections and the
// single-amplifier 3-pole section stay unity-gain followers, so an order
// whose sections are all of those kinds cannot take a gain. Equal shares
// keep the largest section gain, and with it the largest noise gain and
// the largest demand on the op-amp's gain-bandwidth, as small as the split
// allows (common practice, no source). The 2-pole sections are Sallen-Key
// (unity gain, or K = 1 + Rb/Ra above 0 dB) or multiple-feedback
// (inverting; gain R2/R1 for the low-pass, C1/C2 for the high-pass), as
// Spec.Topology asks; Design.Alternatives lists what the fit may choose
// from under TopologyAuto. Spec.Polarity keep forbids an inverting
// filter: an odd number of multiple-feedback sections.
//
// # Sections
//
// A complex pair p, p* becomes a 2-pole section with w0 = |p| and
// Q = |p| / (2|Re p|); the real pole of an odd order becomes a buffered RC
// section (OddOnePole) or joins the lowest-Q pair in a single-amplifier
// 3-pole section (OddThreePole; pairing with the highest-Q pair is not
// realisable for some Chebyshev orders). Sections cascade in rising Q with
// the 1-pole section first (Texas Instruments, Op Amps for Everyone,
// SLOD006B, section 16.3). The circuits (Sallen-Key, 3-pole, RC, each as a
// low-pass and a high-pass) are described once as data in Topology, with
// their transfer functions for arbitrary element values; the formulas are in
// docs/check-values.md ("Section circuits") and are verified by nodal analysis in the
// tests.
//
// # Element values and scaling
//
// Design.Normalised gives each section's element values at a 1 rad/s edge
// with unit resistors (low-pass) or unit capacitors (high-pass), as printed
// in handbook tables (A. B. Williams and F. J. Taylor, Electronic Filter
// Design Handbook; Op Amps for Everyone, chapter 16). The Sallen-Key values
// follow directly from the section polynomial; the 3-pole values solve the
// coefficient equations, whose residual is a polynomial (a cubic for the
// normalised values, a sextic or a cubic when the capacitors are given) whose
// real roots come from its companion matrix. Design.Scale applies the
// classical hand procedure: frequency scaling by kf = 2π·fp and, per
// section, impedance scaling kz (R' = kz·R, C' = C/(kf·kz)) chosen from an
// anchor capacitor, or so that the resistors sit in the geometric middle of
// 1 kΩ..1 MΩ (common practice).
//
// # Analysis
//
// Stage.Response evaluates a section built from actual parts (series and
// parallel combinations included) from its closed form N(jω)/D(jω), in a
// few tens of nanoseconds per frequency point; Gain2 gives |H|² without
// complex arithmetic for the fit's inner loop. GroupDelayRational uses
// τ = Re(D'/D) - Re(N'/N) at s = jω. Netlist writes a SPICE netlist with only
// R, C, V and E elements (op-amps as followers with gain IdealGain = 1e12,
// or a single-pole subcircuit for a given gain-bandwidth); AnalyzeNetlist
// reads such text independently of the topology descriptions and solves its
// modified nodal equations at each frequency with gonum's LU factorisation
// (complex system in its real equivalent form, two steps of iterative
// refinement). The tests hold the closed form and the nodal analysis to
// 1e-6 dB (they agree to about 1e-8 dB), and ngspice's simulation of the
// same netlists to 0.01 dB (about 1e-12 dB in practice).
//
// # References
//
//   - scipy.signal (buttap, cheb1ap, besselap, buttord, cheb1ord), the
//     reference data in testdata/reference.json (written by
//     testdata/gen/reference.py).
//   - A. B. Williams and F. J. Taylor, Electronic Filter Design Handbook:
//     normalised active low-pass tables.
//   - Texas Instruments, Op Amps for Everyone (SLOD006B, 2002), chapter 16:
//     coefficient tables and worked examples.
//   - S. Winder, Analog and Digital Filter Design: Chebyshev and Bessel pole
//     tables.
//   - W. E. Thomson, "Delay networks having maximally flat frequency
//     characteristics", Proc. IEE 96 (1949): the Bessel approximation.
package synth
