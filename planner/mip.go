package planner

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"canalstep/planner/earthwork"
)

// WriteLP writes the single-grade problem p as a mixed-integer model in
// CPLEX LP format, for cross-checking the optimiser with an external MIP
// solver (GLPK's glpsol, CBC). The model is the discretised problem written
// directly: bed levels are continuous variables, one binary per station
// says whether a drop sits there, and |bed − ground| is linearised by cut
// and fill depth variables:
//
//	z_0 = start invert
//	z_i = z_{i−1} − S·L_i − h·d_i              (z_i: bed below any drop at i)
//	u_i ≥ g_i − z_i,  v_i ≥ z_i − g_i           (downstream side of station i)
//	p_i ≥ g_i − z_i − h·d_i,  q_i ≥ z_i + h·d_i − g_i   (upstream side)
//	g_i − maxCut ≤ z_i, z_i + h·d_i ≤ g_i + maxFill
//	Σ d_j ≤ 1 over every run of stations closer than the minimum spacing
//	minimise Σ L_i/2·b·(Cut·(u_{i−1} + p_i) + Fill·(v_{i−1} + q_i)) + (DropFixed + DropPerMetre·h)·Σ d_i
//
// This equals the optimiser's objective only for a template whose areas are
// linear in depth (a rectangular channel without banks: side, bank-top,
// outer and cut slopes all zero), with no waste or borrow price and average
// end areas; WriteLP refuses anything else, and more than one grade or drop
// height, and controls other than the cut and fill limits.
//
// The model also carries valid secant inequalities on the running drop
// count N_i (see the comment in the code): they cut off fractional
// solutions only, so the integer optimum is the same, and they let
// branch-and-bound solvers finish in seconds instead of hours.
func WriteLP(w io.Writer, p Problem) error {
	q, err := prepare(p)
	if err != nil {
		return err
	}
	t := q.tpl[0]
	switch {
	case len(q.grades) != 1 || len(q.heights) != 1:
		return fmt.Errorf("%w: the MIP model takes one grade and one drop height (got %d and %d)", ErrInput, len(q.grades), len(q.heights))
	case t.SideSlope != 0 || t.BankTopWidth != 0 || t.OuterSlope != 0 || t.CutSlope != 0:
		return fmt.Errorf("%w: the MIP model needs a template with linear areas (all slopes and bank-top widths zero)", ErrInput)
	case q.d.Costs.Waste != 0 || q.d.Costs.Borrow != 0:
		return fmt.Errorf("%w: the MIP model has no waste or borrow price", ErrInput)
	case q.d.Volume != earthwork.AverageEndArea:
		return fmt.Errorf("%w: the MIP model uses average end areas", ErrInput)
	case len(q.fixedAt) > 0 || len(q.minWLAt) > 0 || q.d.EndInvert != nil || len(q.d.Command) > 0:
		return fmt.Errorf("%w: the MIP model takes no controls besides cut and fill limits", ErrInput)
	case q.cross:
		return fmt.Errorf("%w: the MIP model takes level ground", ErrInput)
	}
	k := q.core()
	c, g := q.c, q.g
	n := len(c)
	b := t.BedWidth
	h := q.heights[0]
	sl := q.grades[0]
	arrive := k.arrive[0]
	num := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	term := func(coef float64, v string) string {
		if coef < 0 {
			return " - " + num(-coef) + " " + v
		}
		return " + " + num(coef) + " " + v
	}
	bw := bufio.NewWriter(w)
	fmt.Fprintf(bw, "\\ canalstep single-grade drop placement: %d stations, grade %s, drop %s m\n", n, num(sl), num(h))
	fmt.Fprintln(bw, "Minimize")
	fmt.Fprint(bw, " cost:")
	col := 0
	put := func(s string) {
		fmt.Fprint(bw, s)
		if col++; col%6 == 0 {
			fmt.Fprint(bw, "\n ")
		}
	}
	for i := 1; i < n; i++ {
		l := c[i] - c[i-1]
		put(term(l/2*b*q.d.Costs.Cut, fmt.Sprintf("u%d", i-1)))
		put(term(l/2*b*q.d.Costs.Fill, fmt.Sprintf("v%d", i-1)))
		put(term(l/2*b*q.d.Costs.Cut, fmt.Sprintf("p%d", i)))
		put(term(l/2*b*q.d.Costs.Fill, fmt.Sprintf("q%d", i)))
	}
	dc := q.d.Costs.Drop(h)
	for j := 0; j < n; j++ {
		if arrive[j] >= 0 {
			put(term(dc, fmt.Sprintf("d%d", j)))
		}
	}
	fmt.Fprintln(bw, "\nSubject To")
	fmt.Fprintf(bw, " start: z0 = %s\n", num(q.z0))
	drop := func(i int, coef float64) string {
		if arrive[i] >= 0 {
			return term(coef, fmt.Sprintf("d%d", i))
		}
		return ""
	}
	for i := 0; i < n; i++ {
		if i > 0 {
			fmt.Fprintf(bw, " bed%d: z%d - z%d%s = %s\n", i, i, i-1, drop(i, h), num(-sl*(c[i]-c[i-1])))
			fmt.Fprintf(bw, " cutup%d: p%d + z%d%s >= %s\n", i, i, i, drop(i, h), num(g[i]))
			fmt.Fprintf(bw, " fillup%d: q%d - z%d%s >= %s\n", i, i, i, drop(i, -h), num(-g[i]))
			fmt.Fprintf(bw, " lowup%d: z%d%s >= %s\n", i, i, drop(i, h), num(g[i]-q.d.MaxCutDepth))
			fmt.Fprintf(bw, " highup%d: z%d%s <= %s\n", i, i, drop(i, h), num(g[i]+q.d.MaxFillHeight))
		}
		fmt.Fprintf(bw, " cut%d: u%d + z%d >= %s\n", i, i, i, num(g[i]))
		fmt.Fprintf(bw, " fill%d: v%d - z%d >= %s\n", i, i, i, num(-g[i]))
	}
	// At most one drop in every window that a drop's spacing covers: for
	// each station x, the drops whose spacing reaches past x (clique
	// constraints; tighter than pairwise ones).
	for x := 0; x < n; x++ {
		var vars []string
		for j := 0; j <= x; j++ {
			if arrive[j] >= 0 && arrive[j] > x {
				vars = append(vars, fmt.Sprintf("d%d", j))
			}
		}
		if len(vars) > 1 {
			fmt.Fprintf(bw, " gap%d: %s <= 1\n", x, strings.Join(vars, " + "))
		}
	}
	// Secant cuts. With N_i = drops at stations ≤ i (an integer), the depth
	// below ground on the downstream side of station i is δ(N) = δ0 + h·N,
	// δ0 = g_i − z_0 + S·(c_i − c_0); on the upstream side N_{i−1} counts.
	// Cut·u + Fill·v ≥ f(N) = Cut·max(0, δ) + Fill·max(0, −δ) is convex in
	// N, so the chord through the two integers around its kink bounds f from
	// below at every integer N: a valid inequality that changes no integer
	// solution but closes most of the relaxation gap.
	fmt.Fprintf(bw, " count0: N0%s = 0\n", drop(0, -1))
	for i := 1; i < n; i++ {
		fmt.Fprintf(bw, " count%d: N%d - N%d%s = 0\n", i, i, i-1, drop(i, -1))
	}
	secant := func(name, u, v, nv string, d0 float64) {
		cf := func(m float64) float64 {
			if d := d0 + h*m; d > 0 {
				return q.d.Costs.Cut * d
			} else {
				return -q.d.Costs.Fill * d
			}
		}
		k := math.Floor(-d0 / h)
		f0, f1 := cf(k), cf(k+1)
		// Cut·u + Fill·v − (f1 − f0)·N ≥ f0 − (f1 − f0)·k
		fmt.Fprintf(bw, " %s: %s %s + %s %s%s >= %s\n", name, num(q.d.Costs.Cut), u, num(q.d.Costs.Fill), v, term(-(f1-f0), nv), num(f0-(f1-f0)*k))
	}
	for i := 0; i < n; i++ {
		d0 := g[i] - q.z0 + sl*(c[i]-c[0])
		secant(fmt.Sprintf("sec%d", i), fmt.Sprintf("u%d", i), fmt.Sprintf("v%d", i), fmt.Sprintf("N%d", i), d0)
		if i > 0 {
			secant(fmt.Sprintf("secup%d", i), fmt.Sprintf("p%d", i), fmt.Sprintf("q%d", i), fmt.Sprintf("N%d", i-1), d0)
		}
	}
	fmt.Fprintln(bw, "Bounds")
	for i := 0; i < n; i++ {
		fmt.Fprintf(bw, " %s <= z%d <= %s\n", num(g[i]-q.d.MaxCutDepth), i, num(g[i]+q.d.MaxFillHeight))
	}
	for i := 0; i < n; i++ {
		fmt.Fprintf(bw, " N%d >= 0\n", i)
	}
	fmt.Fprintln(bw, "Binaries")
	for j := 0; j < n; j++ {
		if arrive[j] >= 0 {
			fmt.Fprintf(bw, " d%d\n", j)
		}
	}
	fmt.Fprintln(bw, "End")
	return bw.Flush()
}
