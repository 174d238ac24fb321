// Package production turns fitted designs into batches of boards: saved
// designs, board plans fitted jointly, pick lists and builds, and
// purchase suggestions. It imports no CLI, table or database code; the
// SQLite store (package drawerfit/store) implements its Store interface.
//
// # Saved designs
//
// A Design is one board: one filter from a single fit, or several from a
// plan, each with its specification and candidate, plus the fit's
// Settings. EncodeDesign writes it as a versioned JSON document with
// enumerations by name; DecodeDesign rebuilds every ideal design with
// synth.NewDesign (deterministic) and checks that its sections are the
// stored ones. A design refers to stock rows by id; Batch.Check compares
// the saved parts with the rows as they are and names what changed
// (missing, changed value or dielectric, altered tolerance or package,
// moved, short), with the reference designators affected.
//
// # Board plans
//
// FitPlan fits a Plan's filters jointly. Filters with equal
// specifications form a Group used k times per board. Each group is
// fitted once with optimize.Fit, with Boards = k × the plan's boards and
// Top = Pool (40 by default), so that its pool holds a few dozen
// alternatives with different stock rows. A depth-first branch and bound
// then chooses one alternative per group: a row's parts per board are
// summed over every group (times k) and the batch must not exceed its
// quantity; the board's figures are the worst filter error, the part
// count and the number of distinct rows (a bit set). A partial board is
// cut when its lower bound (error so far, parts so far plus the fewest the
// remaining groups add, rows so far) can enter neither the top list (the
// fit's ranking, monotone in all three) nor the Pareto front (strictly
// dominated by a member). The result lists the best boards by the fit's
// ranking and every board of the front. The search costs a few per cent
// of the filters' fits (see the benchmark). Identical filters share one
// candidate; only when no board can be built that way are the copies
// fitted separately, each further copy on the stock the earlier ones
// leave (PlanResult.Split).
//
// # Builds
//
// NewBatch works out the pick list of N boards: per stock row the
// quantity for the batch and the designators it fills (report.PartRefs'
// names, prefixed F2. for a board's second filter), grouped by bin.
// BuildBatch hands the store one DrawRequest: inside one write
// transaction the store re-reads the rows, calls the check, applies the
// deltas with stock.Store.Adjust semantics (nothing drawn on a shortfall)
// and links the ledger entries to the build. UndoBuild returns them once.
//
// # Purchase suggestions
//
// SuggestFit and SuggestPlan re-run the search with a candidate purchase
// added to a copy of the stock and keep what improves the best result by
// the fit's ranking. Candidates are IEC 60063 values (E24 and E96
// resistors, E6 and E12 capacitors) next to the exact values the best
// design needs: the resistors solved for its capacitors
// (synth.Topology.Solve), and its capacitors. A cheap screen (the response
// with the value put into the positions it suits) orders them, and a
// handful get a full search. When the stock cannot cover the boards, the
// design the drawer would give without quantity limits names the short
// rows, and their restock is one more suggestion. The quantity to buy is
// what the improved design takes for the asked boards.
package production
