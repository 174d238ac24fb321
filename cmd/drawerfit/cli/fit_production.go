package cli

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"
	"time"

	"github.com/BurntSushi/toml"
	"github.com/spf13/cobra"

	"drawerfit/fault"
	"drawerfit/optimize"
	"drawerfit/production"
	"drawerfit/stock"
	"drawerfit/store"
	"drawerfit/synth"
	"drawerfit/tolerance"
)

// The production steps of fit: --save keeps the listed candidates as
// saved designs, --plan fits a board plan file, --suggest lists
// purchases. The domain work is package production's.

// NewCmdYield builds `drawerfit yield` over the saved designs; runF replaces
// the run (nil: the real one).
func NewCmdYield(env *Env, runF func(*yieldOptions) error) *cobra.Command {
	return newYieldCmdWith(openSavedDesigns)(env, runF)
}

// ---- saved designs as the yield command's source ----

// savedDesigns reads saved designs from the stock database.
type savedDesigns struct{ db *store.DB }

func openSavedDesigns(env *Env) (designSource, error) {
	db, err := env.openStoreForReading()
	if err != nil {
		return nil, err
	}
	return &savedDesigns{db: db}, nil
}

// LoadDesign returns the filter of design id; a board of several filters
// is addressed as ID/N (N from 1).
func (s *savedDesigns) LoadDesign(ctx context.Context, id string) (*optimize.Candidate, synth.Spec, error) {
	d, n, err := loadDesignFilter(ctx, s.db, id)
	if err != nil {
		return nil, synth.Spec{}, err
	}
	f := d.Filters[n]
	return f.Candidate, f.Spec, nil
}

func (s *savedDesigns) Close() error { return s.db.Close() }

// RefitFor returns a refit over the database's current stock with the
// options the design was fitted with.
func (s *savedDesigns) RefitFor(ctx context.Context, id string, c *optimize.Candidate) (tolerance.RefitFunc, error) {
	d, _, err := loadDesignFilter(ctx, s.db, id)
	if err != nil {
		return nil, err
	}
	items, err := s.db.List(ctx, stock.Filter{})
	if err != nil {
		return nil, err
	}
	opt, err := d.Settings.Options()
	if err != nil {
		return nil, err
	}
	opt.Boards = max(d.Boards, 1)
	return refitFor(&fitRun{opts: opt, items: items, ctx: ctx}, c), nil
}

// loadDesignFilter reads "ID" (a one-filter design) or "ID/N" and returns
// the design and the filter's index.
func loadDesignFilter(ctx context.Context, db *store.DB, ref string) (*production.Design, int, error) {
	id, num, hasNum := strings.Cut(strings.TrimSpace(ref), "/")
	d, err := db.Design(ctx, id)
	if err != nil {
		return nil, 0, err
	}
	if !hasNum {
		if len(d.Filters) > 1 {
			return nil, 0, fault.Invalidf("design %s is a board of %d filters; name one as %s/N with N from 1 to %d", d.ID, len(d.Filters), d.ID, len(d.Filters))
		}
		return d, 0, nil
	}
	n, err := strconv.Atoi(num)
	if err != nil || n < 1 || n > len(d.Filters) {
		return nil, 0, fault.Invalidf("%q: design %s has filters 1 to %d", ref, d.ID, len(d.Filters))
	}
	return d, n - 1, nil
}

// ---- fit --save ----

func saveFitCandidates(env *Env, o *fitOptions, run *fitRun) ([]string, error) {
	if o.stockCSV != "" {
		return nil, fault.Invalidf("--save keeps designs that refer to rows of the stock database; import the file first (drawerfit stock import %s) and fit without --stock", o.stockCSV)
	}
	var ds []*production.Design
	for i, c := range run.result.Candidates {
		ds = append(ds, &production.Design{Boards: run.opts.Boards, Rank: i + 1, Pareto: c.Pareto, Settings: production.SettingsOf(run.opts),
			Filters: []production.Filter{{Spec: run.spec, Candidate: c}}})
	}
	return saveDesigns(env, ds)
}

func saveDesigns(env *Env, ds []*production.Design) ([]string, error) {
	db, err := env.openStore()
	if err != nil {
		return nil, err
	}
	defer db.Close()
	if err := db.SaveDesigns(env.Ctx, ds); err != nil {
		return nil, err
	}
	ids := make([]string, len(ds))
	for i, d := range ds {
		ids[i] = d.ID
	}
	return ids, nil
}

// addIDColumn puts the saved designs' ids into the candidate table as its
// second column.
func addIDColumn(g *grid, ids []string) {
	if len(ids) == 0 {
		return
	}
	g.insertColumn(1, "id", ids)
}

// ---- fit --suggest ----

// fitSuggestions are the purchase suggestions of a fit or plan.
type fitSuggestions struct {
	list    []production.Suggestion
	boards  int
	elapsed time.Duration
}

func suggestForFit(env *Env, o *fitOptions, run *fitRun) error {
	start := env.Now()
	so := production.SuggestOptions{}
	if choice, err := o.ampChoice(); err == nil {
		so.Fit = func(ctx context.Context, items []stock.Item, spec synth.Spec, fo optimize.Options) (*optimize.Result, error) {
			fo.Progress = nil
			ar, err := optimize.FitAmps(ctx, items, spec, fo, choice)
			if err != nil {
				return nil, err
			}
			return ar.Result, nil
		}
	}
	list, err := production.SuggestFit(env.Ctx, run.items, run.spec, run.opts, run.result, so)
	if err != nil {
		return err
	}
	run.suggest = &fitSuggestions{list: list, boards: run.opts.Boards, elapsed: env.Now().Sub(start)}
	return nil
}

func printFitSuggestions(env *Env, w io.Writer, run *fitRun) { run.suggest.print(env, w) }

func (s *fitSuggestions) print(env *Env, w io.Writer) {
	if s == nil {
		return
	}
	fmt.Fprintf(w, "\nPurchase suggestions for %s (each tested by fitting again with it in stock; %s):\n", plural(s.boards, "board"), s.elapsed.Round(time.Millisecond))
	if len(s.list) == 0 {
		fmt.Fprintln(w, "  none: no E24/E96 resistor or E6/E12 capacitor near the values the design needs improves on what is in stock.")
		return
	}
	g := newGrid("#", "buy", "part", "for row", "cost", "what it buys").wrap(24, 5).wrap(14, 2).optional(dropFirst, 3)
	g.right(0, 1, 4)
	estimates := false
	for i, sg := range s.list {
		for j, it := range sg.Items {
			num, buys := "", ""
			if j == 0 {
				num, buys = strconv.Itoa(i+1), sg.Buys()
			}
			row := "new"
			if it.ID != 0 {
				row = strconv.FormatInt(it.ID, 10)
			}
			cost := "?"
			if c, ok := it.Price.Times(it.Quantity); ok && c.Known() {
				cost = c.String()
				if it.ID == 0 {
					cost, estimates = "≈"+cost, true
				}
			}
			g.add(num, strconv.Itoa(it.Quantity), it.Label(), row, cost, buys)
		}
	}
	g.render(env, w)
	if estimates {
		fmt.Fprintln(w, "≈: a new row's price is the most common price of stock rows of the same kind, package and dielectric; ?: no price known.")
	}
}

type jsonPurchase struct {
	StockID    *int64  `json:"stock_id"`
	Kind       string  `json:"kind"`
	Value      float64 `json:"value"`
	Tolerance  float64 `json:"tolerance"`
	Dielectric string  `json:"dielectric"`
	Package    string  `json:"package"`
	Quantity   int     `json:"quantity"`
	Part       string  `json:"part"`
	// UnitPrice is the row's price, or for a new row an estimate (the
	// most common price of rows like it); null when none is known.
	UnitPrice      *string  `json:"unit_price"`
	PriceEstimated bool     `json:"price_estimated"`
	Voltage        *float64 `json:"voltage"`
}

type jsonSuggestion struct {
	Items           []jsonPurchase `json:"items"`
	ClosesShortfall bool           `json:"closes_shortfall"`
	ResponseError   *float64       `json:"response_error_db"`
	ErrorBefore     *float64       `json:"response_error_before_db"`
	UniqueBefore    int            `json:"unique_parts_before"`
	UniqueAfter     int            `json:"unique_parts_after"`
	UniqueSaved     int            `json:"unique_parts_saved"`
	PartsBefore     int            `json:"parts_before"`
	PartsAfter      int            `json:"parts_after"`
	Buys            string         `json:"buys"`
	// Cost is the purchase's total (null when a price is unknown);
	// CostEstimated says it includes an estimated price.
	Cost          *string `json:"cost"`
	CostEstimated bool    `json:"cost_estimated"`
}

func finite(v float64) *float64 {
	if math.IsInf(v, 0) || math.IsNaN(v) {
		return nil
	}
	return &v
}

func (s *fitSuggestions) json() []jsonSuggestion {
	if s == nil {
		return nil
	}
	out := []jsonSuggestion{}
	for _, sg := range s.list {
		js := jsonSuggestion{ClosesShortfall: sg.ClosesShortfall(), ResponseError: finite(sg.After.WorstError),
			ErrorBefore: finite(sg.Before.WorstError), UniqueBefore: sg.Before.UniqueParts, UniqueAfter: sg.After.UniqueParts,
			UniqueSaved: sg.UniqueSaved(), PartsBefore: sg.Before.PartCount, PartsAfter: sg.After.PartCount, Buys: sg.Buys()}
		cost, est := sg.Cost()
		js.Cost, js.CostEstimated = moneyJSON(cost), est && cost.Known()
		for _, it := range sg.Items {
			jp := jsonPurchase{Kind: it.Kind.String(), Value: it.Value, Tolerance: it.Tolerance, Dielectric: it.Dielectric,
				Package: it.Package, Quantity: it.Quantity, Part: it.Label(), UnitPrice: moneyJSON(it.Price),
				PriceEstimated: it.ID == 0 && it.Price.Known(), Voltage: nonZero(it.Voltage)}
			if it.ID != 0 {
				id := it.ID
				jp.StockID = &id
			}
			js.Items = append(js.Items, jp)
		}
		out = append(out, js)
	}
	return out
}

// ---- plan files ----

// planFile is the TOML form of a board plan: a name, a batch size and a
// [[filter]] table per filter with a label and the fit's specification
// flags under the same names.
type planFile struct {
	Name    string           `toml:"name"`
	Boards  int              `toml:"boards"`
	Filters []planFileFilter `toml:"filter"`
}

type planFileFilter struct {
	Label      string   `toml:"label"`
	Kind       string   `toml:"kind"`
	Pass       any      `toml:"pass"`
	PassAtten  *float64 `toml:"pass-atten"`
	Stop       any      `toml:"stop"`
	Atten      *float64 `toml:"atten"`
	Response   string   `toml:"response"`
	Ripple     *float64 `toml:"ripple"`
	Order      *int     `toml:"order"`
	Odd        string   `toml:"odd"`
	BesselNorm string   `toml:"bessel-norm"`
	Placement  string   `toml:"placement"`
}

// readPlan reads and checks a plan file; every mistake is a fault.Invalid
// naming the file, and the filter when it is one filter's.
func readPlan(path string) (production.Plan, error) {
	var pf planFile
	var p production.Plan
	md, err := toml.DecodeFile(path, &pf)
	if err != nil {
		if errors.Is(err, os.ErrNotExist) {
			return p, fault.NotFoundf("plan file %s does not exist", path)
		}
		var pe toml.ParseError
		if errors.As(err, &pe) {
			return p, fault.Invalidf("plan file %s, line %d: %s", path, pe.Position.Line, pe.Message)
		}
		return p, fault.Invalidf("plan file %s: %v", path, err)
	}
	if und := md.Undecoded(); len(und) > 0 {
		var keys []string
		for _, k := range und {
			keys = append(keys, k.String())
		}
		return p, fault.Invalidf("plan file %s: unknown keys %s (a filter takes label, kind, pass, pass-atten, stop, atten, response, ripple, order, odd, bessel-norm, placement)",
			path, strings.Join(keys, ", "))
	}
	p.Name, p.Boards = strings.TrimSpace(pf.Name), pf.Boards
	if p.Name == "" {
		return p, fault.Invalidf("plan file %s: give the board a name (name = \"...\")", path)
	}
	if !md.IsDefined("boards") {
		p.Boards = 1
	}
	for i, f := range pf.Filters {
		where := fmt.Sprintf("plan file %s, filter %d", path, i+1)
		if strings.TrimSpace(f.Label) != "" {
			where = fmt.Sprintf("plan file %s, filter %q", path, f.Label)
		}
		po := planOptions{kind: f.Kind, response: f.Response, odd: f.Odd, besselNorm: f.BesselNorm, placement: f.Placement}
		if strings.TrimSpace(po.placement) == "" {
			po.placement = "inside" // as the fit of one filter
		}
		if po.response == "" {
			po.response = "butterworth"
		}
		if po.odd == "" {
			po.odd = "1pole"
		}
		if po.besselNorm == "" {
			po.besselNorm = "mag"
		} else {
			po.besselNormSet = true
		}
		if po.pass, err = freqText(f.Pass); err != nil {
			return p, fault.Invalidf("%s: pass: %v", where, err)
		}
		if po.stop, err = freqText(f.Stop); err != nil {
			return p, fault.Invalidf("%s: stop: %v", where, err)
		}
		if f.PassAtten != nil {
			po.passAtten, po.passAttenSet = *f.PassAtten, true
		}
		if f.Atten != nil {
			po.atten, po.attenSet = *f.Atten, true
		}
		if f.Ripple != nil {
			po.ripple, po.rippleSet = *f.Ripple, true
		}
		if f.Order != nil {
			po.order, po.orderSet = *f.Order, true
		}
		if po.kind == "" {
			return p, fault.Invalidf("%s: give kind = \"lowpass\" or \"highpass\"", where)
		}
		spec, err := planSpec(&po)
		if err != nil {
			// The flag names in planSpec's messages are the file's keys.
			return p, fault.Invalidf("%s: %s", where, strings.ReplaceAll(err.Error(), "--", ""))
		}
		p.Filters = append(p.Filters, production.PlanFilter{Label: f.Label, Spec: spec})
	}
	if err := p.Validate(); err != nil {
		return p, fault.Invalidf("plan file %s: %s", path, strings.TrimPrefix(err.Error(), fmt.Sprintf("plan %q: ", p.Name)))
	}
	return p, nil
}

// freqText accepts a frequency as text ("1.5k", "20 Hz") or a number.
func freqText(v any) (string, error) {
	switch x := v.(type) {
	case nil:
		return "", nil
	case string:
		return x, nil
	case int64:
		return strconv.FormatInt(x, 10), nil
	case float64:
		return strconv.FormatFloat(x, 'g', -1, 64), nil
	}
	return "", fmt.Errorf("%v is neither a number nor text such as \"1.5k\"", v)
}

// ---- fit --plan ----

// planRun is everything a plan fit produced.
type planRun struct {
	file    string
	opts    production.PlanOptions
	result  *production.PlanResult
	source  string
	elapsed time.Duration
	ids     []string // saved design ids, parallel to result.Boards (with --save)
	suggest *fitSuggestions
	items   []stock.Item // the stock searched (for the boards' cost)
}

func runPlanFit(env *Env, o *fitOptions) error {
	if o.spec.kind != "" || o.spec.pass != "" || o.spec.stop != "" || o.spec.orderSet {
		return fault.Invalidf("--plan takes the filters from the file: drop lowpass/highpass and --pass, --stop, --order")
	}
	p, err := readPlan(o.plan)
	if err != nil {
		return err
	}
	if o.boardsSet {
		p.Boards = o.boards
	}
	fo, err := o.optimizeOptions()
	if err != nil {
		return err
	}
	items, err := env.stockItems(env.Ctx, o.stockCSV, stock.Filter{})
	if err != nil {
		return err
	}
	source := o.stockCSV
	if source == "" {
		source, _ = env.DefaultDBPath()
	}
	if len(items) == 0 {
		return fault.Infeasiblef("the stock (%s) is empty: import a CSV with `drawerfit stock import FILE`, or fit against one with --stock FILE", source)
	}
	popts := production.PlanOptions{Fit: fo, Top: o.top}
	choice, err := o.ampChoice()
	if err != nil {
		return err
	}
	popts.FitFunc = func(ctx context.Context, items []stock.Item, spec synth.Spec, fo optimize.Options) (*optimize.Result, error) {
		ar, err := optimize.FitAmps(ctx, items, spec, fo, choice)
		if err != nil {
			return nil, err
		}
		return ar.Result, nil
	}
	prog := newProgress(env, "fitting the plan's filters")
	popts.Progress = prog.update
	start := env.Now()
	res, err := production.FitPlan(env.Ctx, items, p, popts)
	prog.done()
	if err != nil {
		return err
	}
	run := &planRun{file: o.plan, opts: popts, result: res, source: source, elapsed: env.Now().Sub(start), items: items}
	if o.save && len(res.Boards) > 0 {
		if o.stockCSV != "" {
			return fault.Invalidf("--save keeps designs that refer to rows of the stock database; import the file first (drawerfit stock import %s) and fit without --stock", o.stockCSV)
		}
		var ds []*production.Design
		for i, b := range res.Boards {
			ds = append(ds, res.Design(b, i+1, production.SettingsOf(fo)))
		}
		if run.ids, err = saveDesigns(env, ds); err != nil {
			return err
		}
	}
	if o.suggest {
		s0 := env.Now()
		list, err := production.SuggestPlan(env.Ctx, items, res, popts, production.SuggestOptions{})
		if err != nil {
			return err
		}
		run.suggest = &fitSuggestions{list: list, boards: p.Boards, elapsed: env.Now().Sub(s0)}
	}
	if o.json {
		if err := writeJSON(env.Out, planFitJSON(run)); err != nil {
			return err
		}
	} else {
		printPlanFit(env, env.Out, run)
		run.suggest.print(env, env.Out)
	}
	if len(res.Boards) == 0 || !res.Boards[0].MeetsSpec {
		return exitError{code: 1}
	}
	return nil
}

func printPlanFit(env *Env, w io.Writer, run *planRun) {
	res := run.result
	p := res.Plan
	fmt.Fprintf(w, "Plan %q (%s): %s (%d distinct), %s\n", p.Name, run.file, plural(len(p.Filters), "filter"), len(res.Groups), plural(p.Boards, "board"))
	fmt.Fprintf(w, "Stock: %s — quantities shared by all filters and boards; searched in %s\n\n", run.source, run.elapsed.Round(time.Millisecond))
	if len(res.Boards) == 0 {
		fmt.Fprintln(w, "No board can be built from the stock.")
		for _, l := range res.Limits {
			fmt.Fprintln(w, "  - "+l)
		}
		hint := "Try fewer --boards, --allow-dielectric or a wider value range"
		if run.opts.Fit.Combine < 2 {
			hint += ", --combine 2"
		}
		if run.suggest == nil {
			hint += ", or --suggest for purchases"
		}
		fmt.Fprintln(w, "\n"+hint+".")
		return
	}
	g := newGrid("#", "worst error dB", "parts", "unique", "shared", "cost/board", "boards", "pareto")
	g.right(0, 1, 2, 3, 4, 5, 6).abbrev(1, "worst dB").optional(dropFirst, 4, 7)
	for i, b := range res.Boards {
		mark := ""
		if b.Pareto {
			mark = "*"
		}
		if !b.MeetsSpec {
			mark += " fails spec"
		}
		g.add(strconv.Itoa(i+1), fmtErr(b.WorstError), strconv.Itoa(b.PartCount), strconv.Itoa(b.UniqueParts),
			strconv.Itoa(b.Shared), production.UseCost(b.StockUse, run.items).String(), strconv.Itoa(b.BoardsBuildable), strings.TrimSpace(mark))
	}
	addIDColumn(g, run.ids)
	g.render(env, w)
	fmt.Fprintf(w, "\nRanked %s; worst error = the largest filter response error; unique = distinct stock rows on the board; shared = rows two or more filters use; '*' = on the Pareto front of worst error, parts and unique parts.\n",
		rankText(run.opts.Fit))
	best := res.Boards[0]
	fmt.Fprintf(w, "\nBoard #1: %d parts from %d stock rows per board, worst response error %s dB\n", best.PartCount, best.UniqueParts, fmtErr(best.WorstError))
	fg := newGrid("filter", "label", "specification", "error dB", "parts", "unique", "same as")
	fg.right(0, 3, 4, 5).wrap(20, 2).wrap(10, 1).optional(dropFirst, 5, 6)
	for i, c := range best.Filters {
		same := ""
		for j := 0; j < i; j++ {
			if best.Filters[j] == c {
				same = strconv.Itoa(j + 1)
				break
			}
		}
		f := p.Filters[i]
		fg.add(strconv.Itoa(i+1), f.Label, production.SpecText(f.Spec, c), fmtErr(c.ResponseError), strconv.Itoa(c.PartCount),
			strconv.Itoa(c.UniqueParts), orDash(same))
	}
	fg.render(env, w)
	for i, c := range best.Filters {
		dup := false
		for j := 0; j < i; j++ {
			dup = dup || best.Filters[j] == c
		}
		if dup {
			continue
		}
		fmt.Fprintf(w, "\nFilter %d, %s:", i+1, p.Filters[i].Label)
		printCandidateDetail(env, w, c, 1)
	}
	for _, n := range res.Notes {
		fmt.Fprintln(w, "Note: "+n)
	}
	if len(run.ids) > 0 {
		fmt.Fprintf(w, "\nSaved %s (the list and the Pareto front); build the first with `drawerfit build %s --boards %d`.\n", plural(len(run.ids), "board design"), run.ids[0], p.Boards)
	}
	fmt.Fprintln(w, "\nVerify on the bench before production; capacitor voltage ratings must suit the circuit; safety-relevant, medical or mains-connected uses need qualified review under local rules.")
}

// JSON shapes of a plan fit (stable keys).

type jsonPlanFilter struct {
	Label string   `json:"label"`
	Spec  jsonSpec `json:"spec"`
}

type jsonBoardFilter struct {
	Label     string        `json:"label"`
	Spec      jsonSpec      `json:"spec"`
	SameAs    *int          `json:"same_as"`
	Candidate jsonCandidate `json:"candidate"`
}

type jsonBoard struct {
	ID              string            `json:"design_id"`
	Name            string            `json:"name"`
	Rank            int               `json:"rank"`
	WorstError      float64           `json:"worst_error_db"`
	MeetsSpec       bool              `json:"meets_spec"`
	PartCount       int               `json:"part_count"`
	UniqueParts     int               `json:"unique_parts"`
	SharedRows      int               `json:"shared_rows"`
	CostPerBoard    *string           `json:"cost_per_board"`
	BoardsBuildable int               `json:"boards_buildable"`
	Pareto          bool              `json:"pareto"`
	StockUse        []jsonStockUse    `json:"stock_use"`
	Filters         []jsonBoardFilter `json:"filters"`
}

type jsonPlanFit struct {
	Plan struct {
		Name    string           `json:"name"`
		Boards  int              `json:"boards"`
		Filters []jsonPlanFilter `json:"filters"`
	} `json:"plan"`
	Boards      []jsonBoard      `json:"candidates"`
	Split       bool             `json:"split"`
	Limits      []string         `json:"limits"`
	Notes       []string         `json:"notes"`
	Suggestions []jsonSuggestion `json:"suggestions"`
}

func boardJSON(filters []*optimize.Candidate, specs []production.PlanFilter, b *production.Board, rank int) jsonBoard {
	jb := jsonBoard{Rank: rank, WorstError: b.WorstError, MeetsSpec: b.MeetsSpec, PartCount: b.PartCount,
		UniqueParts: b.UniqueParts, SharedRows: b.Shared, BoardsBuildable: b.BoardsBuildable, Pareto: b.Pareto,
		StockUse: []jsonStockUse{}}
	for _, u := range b.StockUse {
		jb.StockUse = append(jb.StockUse, jsonStockUse{StockID: u.StockID, PerBoard: u.PerBoard})
	}
	for i, c := range filters {
		jf := jsonBoardFilter{Label: specs[i].Label, Spec: specJSON(specs[i].Spec, specs[i].Spec.Order), Candidate: candidateJSON(c, 0)}
		for j := 0; j < i; j++ {
			if filters[j] == c {
				n := j + 1
				jf.SameAs = &n
				break
			}
		}
		jb.Filters = append(jb.Filters, jf)
	}
	return jb
}

func planFitJSON(run *planRun) jsonPlanFit {
	res := run.result
	var out jsonPlanFit
	out.Plan.Name, out.Plan.Boards = res.Plan.Name, res.Plan.Boards
	out.Plan.Filters = []jsonPlanFilter{}
	for _, f := range res.Plan.Filters {
		out.Plan.Filters = append(out.Plan.Filters, jsonPlanFilter{Label: f.Label, Spec: specJSON(f.Spec, f.Spec.Order)})
	}
	out.Boards = []jsonBoard{}
	for i, b := range res.Boards {
		jb := boardJSON(b.Filters, res.Plan.Filters, b, i+1)
		jb.CostPerBoard = moneyJSON(production.UseCost(b.StockUse, run.items))
		if i < len(run.ids) {
			jb.ID = run.ids[i]
		}
		out.Boards = append(out.Boards, jb)
	}
	out.Split, out.Limits, out.Notes = res.Split, res.Limits, res.Notes
	out.Suggestions = run.suggest.json()
	return out
}

// designBoard is the board figures of a saved design, for its JSON, with
// the boards the current stock items cover (production.Design.Board).
func designBoard(d *production.Design, items []stock.Item) *production.Board { return d.Board(items) }
