// Package sweep moves one input key of a design over a range and reports
// every scalar figure of the evaluation at each point (Sweep), and sets two
// designs side by side, figure by figure (Compare; the pinned design of the
// design aids is the usual B). Units are SI, as the figures' own.
package sweep
