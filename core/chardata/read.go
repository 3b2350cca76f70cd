package chardata

import (
	"bytes"
	"hash/fnv"
	"math"
	"strconv"
	"strings"

	"stagewright/core/device"
	"stagewright/core/units"
)

// MaxBytes is the largest file Read accepts: 50 MiB, far more than a sweep
// of a few lengths over VGS × VDS × VBS needs (10,000 rows are about 0.5 MB).
const MaxBytes = 50 << 20

// Least data a fit can work from: enough conducting points, and enough gate
// voltages to see the gm/ID curve bend.
const (
	MinPoints    = 20    // points with |ID| above MinCurrent
	MinGateSteps = 5     // distinct VGS values
	MinCurrent   = 1e-12 // A, the current that counts a point as conducting
)

// Options are what the user says about a file: the polarity of the device,
// and the width, length and temperature when the file has no such column.
type Options struct {
	Pol  device.Polarity
	W, L float64 // m; 0 = the file must have the column
	// TempC (°C) is the temperature of a file without a temp column when
	// TempGiven is set; otherwise such a file is read as 27 °C.
	TempC     float64
	TempGiven bool
}

// columns Read accepts, in the order their messages list them.
var columnNames = []string{"vgs", "vds", "id", "vbs", "w", "l", "temp", "gm", "gds", "cgg"}

const (
	colVGS = iota
	colVDS
	colID
	colVBS
	colW
	colL
	colTemp
	colGM
	colGDS
	colCGG
	numCols
)

// Read parses a characterization file (see the package documentation) for
// a device of polarity o.Pol. It returns the points polarity-normalized, or
// an *Error that names the line and the column of the first problem.
//
// A p-channel file may be written either way: with the signs a simulator
// writes (VGS, VDS and ID negative when it conducts) or as magnitudes. Read
// decides from the conducting points which convention the file uses, and an
// n-channel file written with p-channel signs, or a file that mixes the two,
// is an error that names a line showing it.
func Read(data []byte, o Options) (Table, error) {
	if len(data) > MaxBytes {
		return Table{}, &Error{Message: "the file is " + sizeText(len(data)) + "; at most " + sizeText(MaxBytes) + " is read"}
	}
	if o.Pol != device.NMOS && o.Pol != device.PMOS {
		return Table{}, &Error{Message: "say whether the file is of an n-type or a p-type device"}
	}
	t := Table{Pol: o.Pol, Fingerprint: Fingerprint(data)}
	data = bytes.TrimPrefix(data, []byte("\xef\xbb\xbf"))

	var (
		header  []int // file column → our column, -1 for none
		sep     byte
		headerN int
		rows    [][numCols]float64
		lines   []int
		cols    [numCols]int // our column → file column (1-based), 0 when absent
	)
	lineNo := 0
	for len(data) > 0 {
		var raw []byte
		if i := bytes.IndexByte(data, '\n'); i >= 0 {
			raw, data = data[:i], data[i+1:]
		} else {
			raw, data = data, nil
		}
		lineNo++
		line := strings.TrimSpace(strings.TrimSuffix(string(raw), "\r"))
		if line == "" || line[0] == '#' {
			continue
		}
		if header == nil {
			sep = separatorOf(line)
			cells := split(line, sep)
			if allNumbers(cells) {
				return Table{}, &Error{Line: lineNo, Message: "the first line that is not a comment holds numbers; the file needs a header row naming its columns (" + strings.Join(columnNames, ", ") + ")"}
			}
			header = make([]int, len(cells))
			headerN = len(cells)
			for i, c := range cells {
				name := strings.ToLower(strings.TrimSpace(c))
				k := indexOf(columnNames, name)
				if k < 0 {
					return Table{}, &Error{Line: lineNo, Column: i + 1, Header: c,
						Message: "unknown column " + strconv.Quote(c) + "; the columns are " + strings.Join(columnNames, ", ") + " (vgs, vds and id required)"}
				}
				if cols[k] != 0 {
					return Table{}, &Error{Line: lineNo, Column: i + 1, Header: c,
						Message: "column " + strconv.Quote(name) + " is already column " + strconv.Itoa(cols[k])}
				}
				header[i], cols[k] = k, i+1
			}
			for _, k := range []int{colVGS, colVDS, colID} {
				if cols[k] == 0 {
					return Table{}, &Error{Line: lineNo, Message: "the header has no " + strconv.Quote(columnNames[k]) + " column (vgs, vds and id are required)"}
				}
			}
			if cols[colW] == 0 && !(o.W > 0) {
				return Table{}, &Error{Line: lineNo, Message: "the file has no w column: give the channel width for the whole file"}
			}
			if cols[colL] == 0 && !(o.L > 0) {
				return Table{}, &Error{Line: lineNo, Message: "the file has no l column: give the channel length for the whole file"}
			}
			continue
		}
		cells := split(line, sep)
		if len(cells) != headerN {
			return Table{}, &Error{Line: lineNo, Message: "the row has " + strconv.Itoa(len(cells)) + " cells; the header has " + strconv.Itoa(headerN)}
		}
		var row [numCols]float64
		for k := range row {
			row[k] = math.NaN()
		}
		for i, c := range cells {
			k := header[i]
			v, msg := number(strings.TrimSpace(c))
			if msg != "" {
				return Table{}, &Error{Line: lineNo, Column: i + 1, Header: columnNames[k], Message: msg}
			}
			if (k == colW || k == colL) && !(v > 0) {
				return Table{}, &Error{Line: lineNo, Column: i + 1, Header: columnNames[k], Message: strconv.Quote(c) + ": a channel " + map[int]string{colW: "width", colL: "length"}[k] + " must be above 0 (in m: 10u, 180n)"}
			}
			if k == colCGG && v < 0 {
				return Table{}, &Error{Line: lineNo, Column: i + 1, Header: columnNames[k], Message: strconv.Quote(c) + ": a gate capacitance cannot be negative"}
			}
			row[k] = v
		}
		rows = append(rows, row)
		lines = append(lines, lineNo)
	}
	if header == nil {
		return Table{}, &Error{Message: "the file is empty: it needs a header row (" + strings.Join(columnNames, ", ") + ") and one row per bias point"}
	}
	if len(rows) == 0 {
		return Table{}, &Error{Line: lineNo, Message: "the file has a header but no rows of data"}
	}

	sign, err := signConvention(o.Pol, rows, lines, cols)
	if err != nil {
		return Table{}, err
	}
	t.HasGM, t.HasGDS, t.HasCGG = cols[colGM] != 0, cols[colGDS] != 0, cols[colCGG] != 0
	tempC := 27.0
	if o.TempGiven {
		tempC = o.TempC
	}
	t.Points = make([]Point, len(rows))
	for i, r := range rows {
		p := Point{
			VGS: sign * r[colVGS], VDS: sign * r[colVDS], ID: sign * r[colID],
			VBS: 0, W: o.W, L: o.L, TempC: tempC,
			GM: r[colGM], GDS: r[colGDS], CGG: r[colCGG], Line: lines[i],
		}
		if cols[colVBS] != 0 {
			p.VBS = sign * r[colVBS]
		}
		if cols[colW] != 0 {
			p.W = r[colW]
		}
		if cols[colL] != 0 {
			p.L = r[colL]
		}
		if cols[colTemp] != 0 {
			p.TempC = r[colTemp]
		}
		// Conductances keep their sign under the mirror (∂(−I)/∂(−V)).
		t.Points[i] = p
	}
	if err := checkDuplicates(t.Points, cols); err != nil {
		return Table{}, err
	}
	if err := checkEnough(t.Points); err != nil {
		return Table{}, err
	}
	return t, nil
}

// signConvention decides how a file writes its signs and returns the factor
// that turns its voltages and currents into the n-channel sense: 1 for an
// n-channel file and a p-channel file of magnitudes, −1 for a p-channel file
// with a simulator's signs. Only conducting points (|ID| ≥ MinCurrent) with
// a drain bias (|VDS| > 0) vote; a point whose ID and VDS disagree in sign
// conducts backwards, which a sweep does not hold, and the first point of the
// other convention is named.
func signConvention(pol device.Polarity, rows [][numCols]float64, lines []int, cols [numCols]int) (float64, error) {
	first := [2]int{-1, -1} // first row of the positive and negative convention
	for i, r := range rows {
		id, vds := r[colID], r[colVDS]
		if math.Abs(id) < MinCurrent || vds == 0 {
			continue
		}
		k := 0
		if id < 0 || vds < 0 {
			k = 1
		}
		if (id < 0) != (vds < 0) {
			return 0, &Error{Line: lines[i], Column: cols[colID], Header: "id",
				Message: "ID and VDS have opposite signs on this row: a device conducts from drain to source in the sense VDS gives; check the columns' signs"}
		}
		if first[k] < 0 {
			first[k] = i
		}
	}
	switch {
	case first[0] >= 0 && first[1] >= 0:
		i := max(first[0], first[1])
		return 0, &Error{Line: lines[i], Column: cols[colID], Header: "id",
			Message: "this row's ID and VDS signs differ from those on line " + strconv.Itoa(lines[min(first[0], first[1])]) +
				": the file mixes polarities (or sign conventions); one file describes one device type"}
	case first[1] >= 0 && pol == device.NMOS:
		return 0, &Error{Line: lines[first[1]], Column: cols[colID], Header: "id",
			Message: "negative ID and VDS are a p-type device's signs, but the file was loaded as n-type; choose p-type, or check the data"}
	case first[1] >= 0:
		return -1, nil
	}
	return 1, nil
}

// checkDuplicates rejects two rows at the same bias of the same device.
func checkDuplicates(pts []Point, cols [numCols]int) error {
	type key struct{ vgs, vds, vbs, w, l, temp float64 }
	seen := make(map[key]int, len(pts))
	for _, p := range pts {
		k := key{p.VGS, p.VDS, p.VBS, p.W, p.L, p.TempC}
		if line, ok := seen[k]; ok {
			return &Error{Line: p.Line, Column: cols[colVGS], Header: "vgs",
				Message: "this row repeats the bias point of line " + strconv.Itoa(line) + " (same W, L, temperature, VGS, VDS and VBS)"}
		}
		seen[k] = p.Line
	}
	return nil
}

// checkEnough rejects a table too small to fit.
func checkEnough(pts []Point) error {
	conducting := 0
	gates := map[float64]bool{}
	for _, p := range pts {
		if math.Abs(p.ID) >= MinCurrent {
			conducting++
		}
		gates[p.VGS] = true
	}
	if conducting < MinPoints {
		return &Error{Message: "only " + strconv.Itoa(conducting) + " points carry more than 1 pA; a fit needs at least " + strconv.Itoa(MinPoints)}
	}
	if len(gates) < MinGateSteps {
		return &Error{Message: "the file has " + strconv.Itoa(len(gates)) + " distinct VGS values; a fit needs at least " + strconv.Itoa(MinGateSteps) + " to follow the gm/ID curve"}
	}
	return nil
}

// number reads one cell: a plain or SI-prefixed number, finite.
func number(s string) (float64, string) {
	if s == "" {
		return 0, "the cell is empty; every row needs a number in every column"
	}
	switch strings.ToLower(strings.TrimLeft(s, "+-")) {
	case "nan", "inf", "infinity":
		return 0, strconv.Quote(s) + " is not a finite number; remove the row or give a value"
	}
	v, err := units.Parse(s)
	if err != nil {
		if ne, ok := err.(*units.NumError); ok {
			return 0, strconv.Quote(s) + " is not a number: " + ne.Reason
		}
		return 0, strconv.Quote(s) + " is not a number"
	}
	return v, ""
}

// separatorOf picks the header's separator: tab, then semicolon, then comma.
func separatorOf(line string) byte {
	for _, c := range []byte{'\t', ';', ','} {
		if strings.IndexByte(line, c) >= 0 {
			return c
		}
	}
	return ','
}

func split(line string, sep byte) []string { return strings.Split(line, string(sep)) }

func allNumbers(cells []string) bool {
	for _, c := range cells {
		if _, err := units.Parse(strings.TrimSpace(c)); err != nil {
			return false
		}
	}
	return true
}

func indexOf(list []string, s string) int {
	for i, v := range list {
		if v == s {
			return i
		}
	}
	return -1
}

func sizeText(n int) string {
	return strconv.FormatFloat(float64(n)/(1<<20), 'f', 1, 64) + " MiB"
}

// Fingerprint returns the 64-bit FNV-1a hash of a file's bytes as
// "fnv1a64:" and 16 lower-case hex digits. It tells whether a process was
// fitted to a given file; it is no protection against a file made to
// collide. FNV rather than SHA-256: the standard library's SHA-256 brings
// its FIPS machinery into the page's WebAssembly engine, 120 kB gzipped
// (measured), for a check that needs no cryptographic strength.
func Fingerprint(data []byte) string {
	h := fnv.New64a()
	h.Write(data)
	const digits = "0123456789abcdef"
	sum := h.Sum64()
	b := []byte("fnv1a64:0000000000000000")
	for i := len(b) - 1; sum != 0; i-- {
		b[i] = digits[sum&15]
		sum >>= 4
	}
	return string(b)
}
