package main

import "testing"

func TestParseBench(t *testing.T) {
	out := []byte(`goos: linux
BenchmarkEvaluate/stage=cs&load=r-2         	    9043	    131877 ns/op	   11653 B/op	     163 allocs/op
BenchmarkEvaluate/stage=sf&load=active&vin=1.3	     200	     96633.5 ns/op	   14076 B/op	     167 allocs/op
BenchmarkEvaluatePoints/points=101-2	1000	50000 ns/op
PASS
ok  	stagewright/core/design	0.337s
`)
	got := parseBench(out)
	want := []benchLine{
		{"BenchmarkEvaluate/stage=cs&load=r", 131877, 163, 11653},
		{"BenchmarkEvaluate/stage=sf&load=active&vin=1.3", 96633.5, 167, 14076},
		{"BenchmarkEvaluatePoints/points=101", 50000, 0, 0},
	}
	if len(got) != len(want) {
		t.Fatalf("parsed %d lines %+v, want %d", len(got), got, len(want))
	}
	for i := range want {
		if got[i] != want[i] {
			t.Errorf("line %d: %+v, want %+v", i, got[i], want[i])
		}
	}
	if m := median([]float64{3, 1, 2, 10}); m != 2.5 {
		t.Errorf("median = %v, want 2.5", m)
	}
}
