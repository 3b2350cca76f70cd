package extract

import (
	"math"
	"sort"

	"stagewright/core/device"
)

// maxCurves bounds each plot's curve count (the page draws at most about a
// dozen legibly).
const maxCurves = 12

type series struct {
	label          string
	x, data, model []float64
}

type plots struct {
	idVGS, gmidID, gdsVDS []series
}

// zeroVBS returns, per geometry, the VBS nearest 0 present in the data.
func (pr *prepared) zeroVBS() []float64 {
	out := make([]float64, len(pr.geos))
	for i := range out {
		out[i] = math.Inf(-1)
	}
	for i := range pr.pts {
		p := &pr.pts[i]
		if math.Abs(p.VBS) < math.Abs(out[p.geo]) {
			out[p.geo] = p.VBS
		}
	}
	return out
}

// pickGeos returns up to k geometries spread over the lengths.
func (pr *prepared) pickGeos(k int) []int {
	g := make([]int, len(pr.geos))
	for i := range g {
		g[i] = i
	}
	sort.Slice(g, func(a, b int) bool { return pr.geos[g[a]].l < pr.geos[g[b]].l })
	if len(g) <= k {
		return g
	}
	out := make([]int, k)
	for i := range out {
		out[i] = g[i*(len(g)-1)/(k-1)]
	}
	return out
}

func (f *fitter) plots(p device.Params) plots {
	pr, ev := f.pr, f.ev
	vb0 := pr.zeroVBS()
	var pl plots
	label := func(g int) string { return "L=" + fmtSI(pr.geos[g].l, "m") }

	// ID against VGS: the highest and the lowest VDS of each picked length.
	geos := pr.pickGeos(maxCurves / 2)
	for _, g := range geos {
		lowC, highC := -1, -1
		for c, cv := range pr.vgsCurves {
			q := pr.pts[cv.idx[0]]
			if q.geo != g || q.VBS != vb0[g] || q.VDS <= 0 {
				continue
			}
			if lowC < 0 || q.VDS < pr.pts[pr.vgsCurves[lowC].idx[0]].VDS {
				lowC = c
			}
			if highC < 0 || q.VDS > pr.pts[pr.vgsCurves[highC].idx[0]].VDS {
				highC = c
			}
		}
		for _, c := range []int{highC, lowC} {
			if c < 0 || (c == lowC && lowC == highC) {
				continue
			}
			cv := pr.vgsCurves[c]
			q := pr.pts[cv.idx[0]]
			s := series{label: label(g) + " VDS=" + fmtSI(q.VDS, "V") + " VBS=" + fmtSI(q.VBS, "V")}
			for _, i := range cv.idx {
				s.x = append(s.x, pr.pts[i].VGS)
				s.data = append(s.data, pr.pts[i].ID)
				s.model = append(s.model, ev.id[i])
			}
			pl.idVGS = append(pl.idVGS, s)
			if c == highC {
				t := series{label: s.label}
				for _, i := range cv.idx {
					pt := &pr.pts[i]
					if !pt.inFit {
						continue
					}
					t.x = append(t.x, pt.ID)
					t.data = append(t.data, pt.gm/pt.ID)
					gm := math.NaN()
					if ev.id[i] > 0 {
						gm = ev.gm[i] / ev.id[i]
					}
					t.model = append(t.model, gm)
				}
				pl.gmidID = append(pl.gmidID, t)
			}
		}
	}
	// gds against VDS: two gate voltages (the middle and the highest) per length.
	for _, g := range geos {
		var cs []int
		for c, cv := range pr.vdsCurves {
			q := pr.pts[cv.idx[0]]
			if q.geo == g && q.VBS == vb0[g] && len(cv.idx) >= 3 {
				cs = append(cs, c)
			}
		}
		if len(cs) == 0 {
			continue
		}
		sort.Slice(cs, func(a, b int) bool {
			return pr.pts[pr.vdsCurves[cs[a]].idx[0]].VGS < pr.pts[pr.vdsCurves[cs[b]].idx[0]].VGS
		})
		pick := []int{cs[len(cs)-1]}
		if len(cs) > 2 {
			pick = append([]int{cs[len(cs)/2]}, pick...)
		}
		for _, c := range pick {
			cv := pr.vdsCurves[c]
			s := series{label: label(g) + " VGS=" + fmtSI(pr.pts[cv.idx[0]].VGS, "V")}
			for _, i := range cv.idx {
				s.x = append(s.x, pr.pts[i].VDS)
				s.data = append(s.data, pr.pts[i].gds)
				s.model = append(s.model, ev.gd[i])
			}
			pl.gdsVDS = append(pl.gdsVDS, s)
		}
	}
	return pl
}
