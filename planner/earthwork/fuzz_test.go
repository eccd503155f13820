package earthwork

import (
	"encoding/binary"
	"errors"
	"math"
	"testing"
)

// fuzzInput decodes a template and one cross-section from data. Mode 0
// (first byte even) builds a well-formed section from small steps; mode 1
// takes raw float64s (mostly invalid input).
func fuzzInput(data []byte) (tp Template, offs, levs []float64) {
	if len(data) < 7 {
		return tp, nil, nil
	}
	if data[0]&1 == 1 {
		var f []float64
		for d := data[1:]; len(d) >= 8; d = d[8:] {
			f = append(f, math.Float64frombits(binary.LittleEndian.Uint64(d)))
		}
		if len(f) < 6 {
			return tp, nil, nil
		}
		tp = Template{f[0], f[1], f[2], f[3], f[4], f[5]}
		f = f[6:]
		return tp, f[:len(f)/2], f[len(f)/2:]
	}
	b := data[1:7]
	tp = Template{float64(b[0]) / 16, float64(b[1]) / 32, float64(b[2]) / 32, float64(b[3]) / 32, float64(b[4]) / 32, float64(b[5]) / 32}
	d := data[7:]
	// Pairs (step, rise): the left side outward from the centre, then the
	// right; a zero step byte ends the left side.
	var la, lz, ra, rz []float64
	x, z, right := 0.0, 0.0, false
	for ; len(d) >= 2; d = d[2:] {
		if d[0] == 0 && !right {
			right, x, z = true, 0, 0
			continue
		}
		x += float64(d[0])/16 + 1.0/64
		z += float64(int8(d[1])) / 16
		if right {
			ra, rz = append(ra, x), append(rz, z)
		} else {
			la, lz = append(la, x), append(lz, z)
		}
	}
	for i := len(la) - 1; i >= 0; i-- {
		offs, levs = append(offs, -la[i]), append(levs, 50+lz[i])
	}
	offs, levs = append(offs, 0), append(levs, 50)
	for i := range ra {
		offs, levs = append(offs, ra[i]), append(levs, 50+rz[i])
	}
	return tp, offs, levs
}

func FuzzCross(f *testing.F) {
	f.Add([]byte{0, 48, 48, 64, 96, 64, 48, 16, 3, 40, 9, 0, 0, 16, 250, 30, 200, 8, 1}, 49.0)
	f.Add([]byte{0, 0, 0, 20, 0, 0, 0, 1, 100, 1, 156, 0, 0, 1, 127, 1, 128}, 45.5)
	f.Add([]byte{2, 16, 0, 64, 0, 0, 0, 32, 0, 32, 0, 0, 0, 32, 0, 32, 0}, 60.0)
	f.Add(append([]byte{1}, make([]byte, 8*12)...), 0.0)
	f.Fuzz(func(t *testing.T, data []byte, bed float64) {
		tp, offs, levs := fuzzInput(data)
		// Station 1: the same ground spread 1.3 times wider and 0.5 m higher,
		// so the mid-section resamples two different offset lists.
		o2, l2 := make([]float64, len(offs)), make([]float64, len(levs))
		for i := range offs {
			o2[i] = 1.3 * offs[i]
		}
		for i := range levs {
			l2[i] = levs[i] + 0.5
		}
		all, all2 := [][]float64{offs, o2}, [][]float64{levs, l2}
		s, err := Cross(tp, all, all2)
		if err != nil {
			if !errors.Is(err, ErrInput) {
				t.Fatalf("error %v does not wrap ErrInput", err)
			}
			return
		}
		walk, err := newCross(tp, all, all2, 0)
		if err != nil {
			t.Fatalf("the walked sections fail where the tabulated did not: %v", err)
		}
		// Hostile beds must not panic.
		for _, b := range []float64{math.NaN(), math.Inf(1), math.Inf(-1), math.MaxFloat64} {
			s.Areas(0, b)
			s.MidAreas(1, b, bed)
			s.Catch(1, b)
		}
		ref := polyAt(offs, levs, 0)
		if !(math.Abs(bed-ref) <= 1e4) {
			s.Areas(0, bed)
			s.Catch(0, bed)
			return
		}
		// Magnitudes that bound the rounding of the exact integrals.
		var reach, relief float64
		for i := range o2 {
			reach = math.Max(reach, math.Abs(o2[i]))
			relief = math.Max(relief, math.Abs(l2[i]-ref))
		}
		x3 := tp.HalfWidthAtBank()
		reach += x3 + (tp.OuterSlope+tp.CutSlope)*(relief+math.Abs(bed-ref)+tp.BankHeight+1)
		scale := (1 + reach) * (1 + relief + math.Abs(bed-ref) + tp.BankHeight)
		for i := range 2 {
			c, fl := s.Areas(i, bed)
			wc, wf := walk.Areas(i, bed)
			if !(c >= 0 && fl >= 0) || math.IsInf(c, 0) || math.IsInf(fl, 0) {
				t.Fatalf("station %d bed %g: cut %g fill %g", i, bed, c, fl)
			}
			if math.Abs(c-wc) > 1e-9*scale || math.Abs(fl-wf) > 1e-9*scale {
				t.Fatalf("station %d bed %g: table %g/%g walk %g/%g", i, bed, c, fl, wc, wf)
			}
			o, lv := all[i], all2[i]
			left, right := s.Catch(i, bed)
			for _, k := range []struct {
				c     Catch
				sign  float64
				width float64
				last  float64
			}{{left, -1, -o[0], lv[0]}, {right, 1, o[len(o)-1], lv[len(lv)-1]}} {
				a := k.sign * k.c.Offset
				if !(a >= x3-1e-9*(1+x3)) {
					t.Fatalf("station %d bed %g: catch %+v inside the bank edge %g m", i, bed, k.c, x3)
				}
				if k.c.Found != (a <= k.width) {
					t.Fatalf("station %d bed %g: catch %+v, sampled width %g m", i, bed, k.c, k.width)
				}
				g := polyAt(o, lv, k.c.Offset)
				if math.Abs(k.c.Level-g) > 1e-9*scale {
					t.Fatalf("station %d bed %g: catch %+v is not on the ground (%g m there)", i, bed, k.c, g)
				}
				if !k.c.Found && k.c.Level != k.last {
					t.Fatalf("station %d bed %g: catch %+v beyond the width is not on the level extension %g m", i, bed, k.c, k.last)
				}
				// On the outer slope: |a − x3| = z·|level − top|.
				z := tp.OuterSlope
				if k.c.Cut {
					z = tp.CutSlope
				}
				if z < minOuterSlope {
					z = 0
				}
				if math.Abs((a-x3)-z*math.Abs(k.c.Level-(bed+tp.BankHeight))) > 1e-9*scale {
					t.Fatalf("station %d bed %g: catch %+v is not on the %g:1 slope from the bank edge %g m", i, bed, k.c, z, x3)
				}
			}
		}
		c, fl := s.MidAreas(1, bed+0.25, bed)
		wc, wf := walk.MidAreas(1, bed+0.25, bed)
		if !(c >= 0 && fl >= 0) || math.IsInf(c, 0) || math.IsInf(fl, 0) || math.Abs(c-wc) > 1e-9*scale || math.Abs(fl-wf) > 1e-9*scale {
			t.Fatalf("mid-section bed %g: table %g/%g walk %g/%g", bed, c, fl, wc, wf)
		}
	})
}
