package earthwork

import (
	"fmt"
	"math"
)

// Costs are the unit prices of the plan in one currency (the tool does not
// care which). Earthwork is priced per segment between two stations: the cut
// there is used for the banks there (lateral haul, the practice behind the
// classical balancing depth); a surplus of usable cut goes to waste and a
// shortfall is borrowed. Longitudinal haul is not modelled.
//
//	usable = cut·(1 − Shrinkage)                         compacted m³
//	waste  = max(0, cut − fill/(1 − Shrinkage))          surplus, bank m³
//	borrow = max(0, fill − usable)                       shortfall, compacted m³
//	cost   = Cut·cut + Fill·fill + Waste·waste + Borrow·borrow
type Costs struct {
	Cut          float64 `json:"cut"`            // per m³ of excavation (bank measure)
	Fill         float64 `json:"fill"`           // per m³ of compacted fill placed
	Shrinkage    float64 `json:"shrinkage"`      // fraction of cut volume lost when compacted into fill, in [0, 1)
	Waste        float64 `json:"waste"`          // per m³ (bank) of surplus cut hauled to spoil
	Borrow       float64 `json:"borrow"`         // per m³ (compacted) of fill brought from borrow pits
	DropFixed    float64 `json:"drop_fixed"`     // per drop structure
	DropPerMetre float64 `json:"drop_per_metre"` // per metre of drop height
}

// DefaultCosts returns the default unit prices: cut 4, fill 6, shrinkage
// 0.10, waste 2, borrow 8, a drop 15000 + 10000 per metre of height. They are
// illustrative scoping values (no source): only their ratios matter to the
// plan, and a real project sets its own. Shrinkage 0.10 is the low end of the
// 10–20 % the reference sheet §6.3 gives for common earth (from memory).
func DefaultCosts() Costs {
	return Costs{Cut: 4, Fill: 6, Shrinkage: 0.10, Waste: 2, Borrow: 8, DropFixed: 15000, DropPerMetre: 10000}
}

// Validate reports whether every price is finite and non-negative and the
// shrinkage lies in [0, 1).
func (c Costs) Validate() error {
	for _, v := range []struct {
		name string
		x    float64
	}{{"cut", c.Cut}, {"fill", c.Fill}, {"waste", c.Waste}, {"borrow", c.Borrow},
		{"drop fixed", c.DropFixed}, {"drop per metre", c.DropPerMetre}} {
		if !(v.x >= 0) || math.IsInf(v.x, 0) {
			return fmt.Errorf("%w: %s cost %g must be a finite number ≥ 0", ErrInput, v.name, v.x)
		}
	}
	if !(c.Shrinkage >= 0 && c.Shrinkage < 1) {
		return fmt.Errorf("%w: shrinkage %g must be in [0, 1)", ErrInput, c.Shrinkage)
	}
	return nil
}

// Balance returns the volumes behind Earthwork's waste and borrow terms for
// the cut and fill volumes (m³) of one segment: the surplus cut hauled to
// spoil (bank m³) and the fill brought from borrow (compacted m³). At most
// one of them is non-zero.
func (c Costs) Balance(cut, fill float64) (waste, borrow float64) {
	keep := 1 - c.Shrinkage
	if usable := cut * keep; usable > fill {
		return cut - fill/keep, 0
	} else {
		return 0, fill - usable
	}
}

// Earthwork returns the cost of the cut and fill volumes (m³) of one
// segment: the one earthwork price used by the optimiser, the evaluation of
// a plan and the baselines (see Costs for the formula).
func (c Costs) Earthwork(cut, fill float64) float64 {
	waste, borrow := c.Balance(cut, fill)
	return c.Cut*cut + c.Fill*fill + c.Waste*waste + c.Borrow*borrow
}

// Drop returns the cost of one drop of height h (m).
func (c Costs) Drop(h float64) float64 { return c.DropFixed + c.DropPerMetre*h }
