package extract

import (
	"math"
	"sort"

	"stagewright/core/chardata"
)

// curveKey identifies one sweep of VGS: a device (W, L, temperature) at one
// drain and bulk bias.
type curveKey struct{ w, l, temp, vds, vbs float64 }

// curve is the points of one VGS sweep, sorted by VGS, with gm/ID of the
// data at each point (from the file's gm, or from central differences of
// ln ID along VGS) and NaN where it cannot be had.
type curve struct {
	key  curveKey
	idx  []int     // indices into the table's points
	gmID []float64 // S/A, of the data
}

// vdsKey identifies one sweep of VDS: a device at one gate and bulk bias.
type vdsKey struct{ w, l, temp, vgs, vbs float64 }

// gdsPair is two neighbouring points of a VDS sweep: the output
// conductance of the data between them is their secant.
type gdsPair struct{ a, b int }

// groups sorts a table into VGS curves and VDS neighbour pairs.
type groups struct {
	curves []curve
	pairs  []gdsPair
}

func groupTable(t *chardata.Table) groups {
	pts := t.Points
	byCurve := map[curveKey][]int{}
	byVDS := map[vdsKey][]int{}
	for i, p := range pts {
		ck := curveKey{p.W, p.L, p.TempC, p.VDS, p.VBS}
		byCurve[ck] = append(byCurve[ck], i)
		vk := vdsKey{p.W, p.L, p.TempC, p.VGS, p.VBS}
		byVDS[vk] = append(byVDS[vk], i)
	}
	var g groups
	for k, idx := range byCurve {
		sort.Slice(idx, func(a, b int) bool { return pts[idx[a]].VGS < pts[idx[b]].VGS })
		c := curve{key: k, idx: idx, gmID: make([]float64, len(idx))}
		for j, i := range idx {
			c.gmID[j] = math.NaN()
			if t.HasGM && pts[i].ID > 0 && !math.IsNaN(pts[i].GM) {
				c.gmID[j] = pts[i].GM / pts[i].ID
				continue
			}
			if j == 0 || j == len(idx)-1 {
				continue
			}
			lo, hi := pts[idx[j-1]], pts[idx[j+1]]
			if lo.ID > 0 && hi.ID > 0 && pts[i].ID > 0 {
				c.gmID[j] = (math.Log(hi.ID) - math.Log(lo.ID)) / (hi.VGS - lo.VGS)
			}
		}
		g.curves = append(g.curves, c)
	}
	sort.Slice(g.curves, func(a, b int) bool { return lessCurve(g.curves[a].key, g.curves[b].key) })
	keys := make([]vdsKey, 0, len(byVDS))
	for k := range byVDS {
		keys = append(keys, k)
	}
	sort.Slice(keys, func(a, b int) bool {
		x, y := keys[a], keys[b]
		if x.l != y.l {
			return x.l < y.l
		}
		if x.w != y.w {
			return x.w < y.w
		}
		if x.temp != y.temp {
			return x.temp < y.temp
		}
		if x.vbs != y.vbs {
			return x.vbs > y.vbs
		}
		return x.vgs < y.vgs
	})
	for _, k := range keys {
		idx := byVDS[k]
		sort.Slice(idx, func(a, b int) bool { return pts[idx[a]].VDS < pts[idx[b]].VDS })
		for j := 1; j < len(idx); j++ {
			if pts[idx[j-1]].VDS > 0 {
				g.pairs = append(g.pairs, gdsPair{idx[j-1], idx[j]})
			}
		}
	}
	return g
}

func lessCurve(x, y curveKey) bool {
	if x.l != y.l {
		return x.l < y.l
	}
	if x.w != y.w {
		return x.w < y.w
	}
	if x.temp != y.temp {
		return x.temp < y.temp
	}
	if x.vbs != y.vbs {
		return x.vbs > y.vbs
	}
	return x.vds < y.vds
}
