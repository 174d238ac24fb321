package production

import (
	"fmt"

	"drawerfit/optimize"
	"drawerfit/stock"
)

// BoardAmp is one stocked amplifier row on a board: its packages are
// shared by the sections of every filter that uses the row, filled in
// filter and section order.
type BoardAmp struct {
	Amp optimize.Amplifier
	// Packages is the number of packages one board takes.
	Packages int
	// Refs are the channel designators in use (U1A, U1B, ...), parallel to
	// Uses.
	Refs []string
	// Uses name the filter (0-based) and section (0-based) of each channel.
	Uses [][2]int
}

// BoardAmps assigns the stocked amplifiers of a board: for each row, the
// sections of all filters fill its packages in order (two filters' sections
// share a quad), numbered U1, U2, ... across rows in the order the rows
// first appear. A single filter gets its candidate's own assignment.
func (d *Design) BoardAmps() []BoardAmp {
	var out []BoardAmp
	idx := map[int64]int{}
	for fi, f := range d.Filters {
		c := f.Candidate
		if !c.Amp.FromStock() {
			continue
		}
		i, ok := idx[c.Amp.StockID]
		if !ok {
			i = len(out)
			idx[c.Amp.StockID] = i
			out = append(out, BoardAmp{Amp: *c.Amp})
		}
		for si := range c.Sections {
			out[i].Uses = append(out[i].Uses, [2]int{fi, si})
		}
	}
	next := 1
	for i := range out {
		ba := &out[i]
		slots, n := optimize.AssignChannels(len(ba.Uses), ba.Amp.Channels)
		ba.Packages = n
		for _, s := range slots {
			s.Package += next - 1
			ba.Refs = append(ba.Refs, s.Designator(ba.Amp.Channels))
		}
		next += n
	}
	return out
}

// ampItem is the stock row of an amplifier as the design saved it.
func ampItem(a optimize.Amplifier) stock.Item {
	return stock.Item{ID: a.StockID, Kind: stock.OpAmp, Name: a.Label, Channels: a.Channels, GBW: a.Model.GBW,
		Location: a.Location, Package: a.Package}
}

// ampUseNote describes a board's amplifier packages for people.
func (ba BoardAmp) String() string {
	return fmt.Sprintf("%d × %s (%s)", ba.Packages, ba.Amp.Label, stock.PackageWord(ba.Amp.Channels))
}
