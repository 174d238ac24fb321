package respplot

import (
	"image/color"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// sans is the typeface of every text on the plots.
var sans = font.Font{Typeface: "Liberation", Variant: "Sans"}

// useSans sets every text style of p to the sans-serif face at the sizes
// used on the build sheet.
func useSans(p *plot.Plot) {
	set := func(f *font.Font, size vg.Length) {
		*f = sans
		f.Size = size
	}
	set(&p.Title.TextStyle.Font, vg.Points(11))
	set(&p.X.Label.TextStyle.Font, vg.Points(10))
	set(&p.Y.Label.TextStyle.Font, vg.Points(10))
	set(&p.X.Tick.Label.Font, vg.Points(9))
	set(&p.Y.Tick.Label.Font, vg.Points(9))
	set(&p.Legend.TextStyle.Font, vg.Points(9))
}

// legend collects the entries of a plot's legend so that they can be added
// at the end behind a white panel, which keeps the labels readable over the
// grid and the shaded specification mask.
type legend struct {
	names  []string
	thumbs [][]plot.Thumbnailer
}

func (l *legend) add(name string, t ...plot.Thumbnailer) {
	l.names = append(l.names, name)
	l.thumbs = append(l.thumbs, t)
}

// install places the legend on p: top or bottom, left or right, inset by
// 6 pt horizontally and 4 pt vertically from the data area's corner.
func (l *legend) install(p *plot.Plot, top, left bool) {
	if len(l.names) == 0 {
		return
	}
	p.Legend.Top, p.Legend.Left = top, left
	p.Legend.XOffs, p.Legend.YOffs = -vg.Points(6), vg.Points(4)
	if left {
		p.Legend.XOffs = vg.Points(6)
	}
	if top {
		p.Legend.YOffs = -vg.Points(4)
	}
	bg := &panel{legend: &p.Legend, names: l.names}
	for i, n := range l.names {
		t := l.thumbs[i]
		if i == 0 {
			t = append([]plot.Thumbnailer{bg}, t...)
		}
		p.Legend.Add(n, t...)
	}
}

// panel draws the legend's background. It is the first thumbnail of the
// first entry, so it is drawn before every other part of the legend, and it
// works out the legend's extent from that entry's icon rectangle with the
// same geometry as plot.Legend.Draw.
type panel struct {
	legend *plot.Legend
	names  []string
}

// Thumbnail implements plot.Thumbnailer.
func (b *panel) Thumbnail(c *draw.Canvas) {
	l := b.legend
	sty := l.TextStyle
	em := sty.Rectangle(" ").Max.X
	var textW, enth vg.Length
	for _, n := range b.names {
		r := sty.Rectangle(n)
		textW = max(textW, r.Max.X)
		enth = max(enth, r.Max.Y)
	}
	const margin = 3 // pt of white around the entries
	m := vg.Points(margin)
	x0, x1 := c.Min.X-em-textW-m, c.Max.X+m
	if l.Left {
		x0, x1 = c.Min.X-m, c.Max.X+em+textW+m
	}
	n := vg.Length(len(b.names))
	y1 := c.Min.Y + enth + m
	y0 := c.Min.Y - (n-1)*(enth+l.Padding) - sty.FontExtents().Descent - m
	rect := vg.Rectangle{Min: vg.Point{X: x0, Y: y0}, Max: vg.Point{X: x1, Y: y1}}
	var path vg.Path
	path.Move(rect.Min)
	path.Line(vg.Point{X: rect.Max.X, Y: rect.Min.Y})
	path.Line(rect.Max)
	path.Line(vg.Point{X: rect.Min.X, Y: rect.Max.Y})
	path.Close()
	c.SetColor(color.White)
	c.Fill(path)
	c.SetLineStyle(draw.LineStyle{Color: color.Gray{Y: 170}, Width: vg.Points(0.5)})
	c.Stroke(path)
}
