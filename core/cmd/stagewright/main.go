// Command stagewright evaluates amplifier designs written as URL fragments.
//
//	stagewright eval 'v=1&stage=cs&pol=n&w=20u&l=0.5u'   one design, one JSON result
//	stagewright eval -                                   one fragment per line on standard input, one JSON line each
//	stagewright keys                                     the fragment keys as a Markdown table
//	stagewright transfer FRAGMENT [-csv] [-points 201]   DC transfer curve and output swing
//	stagewright distortion FRAGMENT [-amp 10m]           HD2, HD3, THD beside the Taylor estimate
//	stagewright corners FRAGMENT [-csv]                  every process corner at −40, 27 and 125 °C
//	stagewright mc FRAGMENT [-n 1000] [-seed 1]          Monte Carlo of process spread and mismatch
//	stagewright size FRAGMENT                            search W, L, bias and load for the t.* targets
//	stagewright charts FRAGMENT                          gm/ID design charts for the process and L
//	stagewright sweep FRAGMENT -key w -lo 1u -hi 100u    every figure against one input
//	stagewright compare FRAGMENT                         A/B table against the pinned design (pin=…)
//	stagewright fit FILE -pol n|p [-process NAME -o F]   fit the model to characterization data
//	stagewright eval -process F.json FRAGMENT            any design command on a user's process file
//
// The exit status is 0 when every design was evaluated, 1 when a design
// could not be (a bad fragment, no operating point), and 2 for a usage
// error.
package main

import (
	"bufio"
	"fmt"
	"io"
	"os"
	"strings"

	"stagewright/core/design"
)

const usage = `usage:
  stagewright eval FRAGMENT   evaluate one design (the text after '#' in the page's address)
  stagewright eval -          evaluate one fragment per line from standard input
  stagewright keys            print the fragment keys as a Markdown table
  stagewright transfer FRAGMENT [-csv] [-points 201]   DC transfer curve, swing and its limits
  stagewright distortion FRAGMENT [-amp 10m]           HD2, HD3, THD (DFT) beside the Taylor estimate
  stagewright corners FRAGMENT [-csv]                  every corner × −40/27/125 °C (+ the design's temp)
  stagewright mc FRAGMENT [-n 1000] [-seed 1]          Monte Carlo (process shift + Pelgrom mismatch)
  stagewright size FRAGMENT                            size to the t.* targets within the lo.*/hi.* ranges
  stagewright charts FRAGMENT                          gm/ID design charts, present design marked
  stagewright sweep FRAGMENT -key K -lo A -hi B [-n 50] [-csv]   every figure against one input
  stagewright compare FRAGMENT                         A/B table of the design against its pin=
  stagewright fit FILE -pol n|p [-base d180] [-w W -l L] [-temp 27] [-process NAME -o FILE.json]
                              fit the model to a transistor's characterization data (CSV)

Every design command takes -process FILE.json: the design then uses that process file's
process (its keys join the fragment's; the fragment's own n.*/p.* keys win).
`

func main() { os.Exit(run(os.Args[1:], os.Stdin, os.Stdout, os.Stderr)) }

func run(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	if len(args) == 0 {
		fmt.Fprint(stderr, usage)
		return 2
	}
	userProcess = nil
	if args[0] != "fit" && args[0] != "keys" {
		rest, pf, err := processFlag(args[1:])
		if err != nil {
			fmt.Fprintf(stderr, "stagewright %s: -process: %v\n", args[0], err)
			return 2
		}
		args, userProcess = append(args[:1:1], rest...), pf
	}
	switch args[0] {
	case "fit":
		return cmdFit(args[1:], stdout, stderr)
	case "eval":
		if len(args) != 2 {
			fmt.Fprint(stderr, "stagewright eval: give exactly one fragment, or - to read fragments from standard input\n"+usage)
			return 2
		}
		if args[1] == "-" {
			return evalLines(stdin, stdout, stderr)
		}
		return evalOne(args[1], stdout, stderr)
	case "keys":
		fmt.Fprint(stdout, design.KeyTableMarkdown())
		return 0
	case "transfer":
		return cmdTransfer(args[1:], stdin, stdout, stderr)
	case "distortion":
		return cmdDistortion(args[1:], stdin, stdout, stderr)
	case "corners":
		return cmdCorners(args[1:], stdin, stdout, stderr)
	case "mc":
		return cmdMC(args[1:], stdin, stdout, stderr)
	case "size":
		return cmdSize(args[1:], stdin, stdout, stderr)
	case "charts":
		return cmdCharts(args[1:], stdin, stdout, stderr)
	case "sweep":
		return cmdSweep(args[1:], stdin, stdout, stderr)
	case "compare":
		return cmdCompare(args[1:], stdin, stdout, stderr)
	case "-h", "-help", "--help", "help":
		fmt.Fprint(stdout, usage)
		return 0
	default:
		fmt.Fprintf(stderr, "stagewright: unknown command %q\n%s", args[0], usage)
		return 2
	}
}

// status is the exit status of one result: a fragment with problems or a
// design with no operating point is a design error. It also sets the
// result's ok to false for a fragment with problems, so that the JSON says
// what the exit status says (the page shows such a result with the bad keys
// at their defaults; a script that reads ok must not take it for the design
// it asked for).
func status(r *design.Result) int {
	if len(r.Problems) > 0 {
		r.OK = false
	}
	if !r.OK {
		return 1
	}
	return 0
}

func evalOne(fragment string, stdout, stderr io.Writer) int {
	var e design.Evaluator
	r := e.EvaluateFragment(onProcess(fragment))
	st := status(&r)
	stdout.Write(append(r.JSON(), '\n'))
	if st != 0 {
		fmt.Fprintln(stderr, "stagewright:", oneLine(&r))
		return st
	}
	return 0
}

func evalLines(stdin io.Reader, stdout, stderr io.Writer) int {
	var e design.Evaluator
	sc := bufio.NewScanner(stdin)
	sc.Buffer(make([]byte, 64*1024), 1<<20)
	worst, line := 0, 0
	w := bufio.NewWriter(stdout)
	defer w.Flush()
	for sc.Scan() {
		line++
		text := strings.TrimSpace(sc.Text())
		if text == "" || strings.HasPrefix(text, "//") {
			continue
		}
		r := e.EvaluateFragment(onProcess(text))
		st := status(&r)
		w.Write(append(r.JSON(), '\n'))
		if st != 0 {
			fmt.Fprintf(stderr, "stagewright: line %d: %s\n", line, oneLine(&r))
			worst = st
		}
	}
	if err := sc.Err(); err != nil {
		fmt.Fprintln(stderr, "stagewright: reading standard input:", err)
		return 2
	}
	return worst
}

// oneLine is the error of a result in one line.
func oneLine(r *design.Result) string {
	var parts []string
	for _, p := range r.Problems {
		parts = append(parts, p.String())
	}
	if r.Error != nil && (len(r.Problems) == 0 || r.Error.Code != "fragment") {
		parts = append(parts, r.Error.Message)
	}
	return strings.Join(parts, "; ")
}
