// Package index writes the index of a batch run: one row per job (one
// alignment planned with one drop-height alternative), as index.csv for
// people and spreadsheets, index.html for reviewers and index.json for
// programs and for merging the indexes of a batch's shards.
//
// Every figure in an [Index] is in SI units (m, m³; costs in the currency of
// the unit prices); the CSV and HTML writers convert to the index's unit
// system. Rows are in the batch's job order (alignment file order, then
// alternative order), whichever worker or shard ran them, so the files are
// the same byte for byte however the batch was split.
package index

import (
	"encoding/csv"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"maps"
	"math"
	"slices"
	"sort"
	"strconv"
	"strings"

	"canalstep/alignment"
	"canalstep/report"
	"canalstep/report/textsafe"
	"canalstep/report/units"
)

// Job statuses.
const (
	// OK: planned; the figures are the optimised plan's.
	OK = "ok"
	// Infeasible: no profile meets every constraint; the reason says where
	// and what relaxes it; the job's folder holds the findings.
	Infeasible = "infeasible"
	// Failed: the job could not be planned (it leaves the DEM, a bad
	// input); nothing was written for it.
	Failed = "failed"
	// NotRun: the batch was interrupted before the job ran.
	NotRun = "not_run"
	// Missing: a merge found the job in none of the shard folders.
	Missing = "missing"
	// OtherShard: in index.json of a shard, a job of another shard (kept
	// so that a merge can check that the shards cover the batch).
	OtherShard = "other_shard"
)

// Format is the value of index.json's "format" member.
const Format = "canalstep-batch-index/1"

// Index is a batch's index.
type Index struct {
	Format string `json:"format"`
	// Units is the unit system of the CSV and HTML ("si" or "us"); the JSON
	// figures are SI whatever it says.
	Units string `json:"units"`
	// Batch identifies the batch: a SHA-256 over every job's key and input
	// hash, the same in every shard of one batch.
	Batch string `json:"batch"`
	// Shard is "K/N" in a shard's index, "" for a whole batch.
	Shard   string `json:"shard,omitempty"`
	Caution string `json:"caution"`
	// Rows holds every job of the batch, in job order; a shard's index
	// lists other shards' jobs with status OtherShard.
	Rows []Row `json:"jobs"`
}

// Row is one job.
type Row struct {
	Job       int    `json:"job"` // 1-based position in the batch
	Alignment string `json:"alignment"`
	// Corridor is the canal this alignment is one route of ("" for none):
	// the routes of a corridor are ranked against each other.
	Corridor string `json:"corridor"`
	// Alternative is the drop-height set as the CLI writes it, in the
	// index's length unit ("0.5,1"); DropHeights the same in metres.
	Alternative string    `json:"alternative"`
	DropHeights []float64 `json:"drop_heights"`
	Status      string    `json:"status"`
	// Reason says why a job is not OK, on one line in the index's units.
	Reason string `json:"reason"`
	// Length is the stationed length in metres (0 when never sampled).
	Length float64 `json:"length"`
	// Plan holds the plan's figures; nil unless Status is OK.
	Plan *Figures `json:"plan"`
	// Folder is the job's output folder relative to the batch folder,
	// "/"-separated ("Main_canal/h0.5_1"); "" when nothing was written.
	Folder string `json:"folder"`
}

// Figures are an optimised plan's totals.
type Figures struct {
	Drops      int     `json:"drops"`
	CutVolume  float64 `json:"cut_volume"`  // m³
	FillVolume float64 `json:"fill_volume"` // m³
	TotalCost  float64 `json:"total_cost"`
	// Saving is the best feasible baseline's total cost minus the plan's,
	// against SavingAgainst (its method); nil when no baseline is feasible.
	Saving        *float64 `json:"saving"`
	SavingAgainst string   `json:"saving_against"`
	// CommandShare is the fraction of stations whose water surface stands
	// at or above the centre-line ground.
	CommandShare float64 `json:"command_share"`
}

// New returns an empty index of rows in the unit system u.
func New(u units.System, batch, shard string, rows []Row) *Index {
	return &Index{Format: Format, Units: u.String(), Batch: batch, Shard: shard, Caution: report.SafetyNotice, Rows: rows}
}

// System returns the index's unit system.
func (ix *Index) System() (units.System, error) { return units.Parse(ix.Units) }

// Listed reports whether the CSV and HTML list the row: every row but
// another shard's.
func (r Row) Listed() bool { return r.Status != OtherShard }

// Canal is what the row's route is an alternative for: its corridor, or
// the alignment itself.
func (r Row) Canal() string {
	if r.Corridor != "" {
		return r.Corridor
	}
	return r.Alignment
}

// Ranks are the rankings of an index's rows, by position in Rows.
type Ranks struct {
	// Alternative[i] is row i's rank among the OK rows of its alignment by
	// total cost (1: least cost), 0 for a row that is not OK.
	Alternative []int
	// Corridor[i] is the rank of row i's alignment among the routes of its
	// corridor, each route by its least-cost OK alternative (1: the best
	// route); 0 without a corridor or without an OK alternative.
	Corridor []int
}

// Rank ranks the rows. Ties go to the earlier job, so ranks are distinct.
func Rank(rows []Row) Ranks {
	rk := Ranks{Alternative: make([]int, len(rows)), Corridor: make([]int, len(rows))}
	better := func(a, b int) bool { // both OK
		if ca, cb := rows[a].Plan.TotalCost, rows[b].Plan.TotalCost; ca != cb {
			return ca < cb
		}
		return rows[a].Job < rows[b].Job
	}
	ok := map[string][]int{} // alignment -> its OK rows
	for i, r := range rows {
		if r.Status == OK && r.Plan != nil {
			ok[r.Alignment] = append(ok[r.Alignment], i)
		}
	}
	routes := map[string][]int{} // corridor -> the best row of each of its alignments
	for _, name := range slices.Sorted(maps.Keys(ok)) {
		idx := ok[name]
		sort.Slice(idx, func(a, b int) bool { return better(idx[a], idx[b]) })
		for k, i := range idx {
			rk.Alternative[i] = k + 1
		}
		if c := rows[idx[0]].Corridor; c != "" {
			routes[c] = append(routes[c], idx[0])
		}
	}
	place := map[string]int{} // alignment -> its rank among its corridor's routes
	for _, best := range routes {
		sort.Slice(best, func(a, b int) bool { return better(best[a], best[b]) })
		for k, i := range best {
			place[rows[i].Alignment] = k + 1
		}
	}
	for i, r := range rows {
		if r.Corridor != "" {
			rk.Corridor[i] = place[r.Alignment]
		}
	}
	return rk
}

// WriteCSV writes index.csv: a header, then one row per listed job with
// its number, alignment, corridor, drop heights, status, reason, length,
// drop count, cut and fill volumes, total cost, saving against the best
// feasible baseline and which baseline that is (both empty when none is
// feasible), share of stations in command, rank among the alignment's
// alternatives and among its corridor's routes, and folder. Figures are
// empty where a job has none; names and reasons are neutralised against
// spreadsheet formulas and stripped of control characters; column names
// carry the unit.
func WriteCSV(w io.Writer, ix *Index) error {
	u, err := ix.System()
	if err != nil {
		return err
	}
	cw := csv.NewWriter(w)
	head := []string{"job", "alignment", "corridor", u.Column("drop_heights", units.Length), "status", "reason",
		u.Column("length", units.Length), "drops", u.Column("cut_volume", units.Volume), u.Column("fill_volume", units.Volume),
		"total_cost", "saving", "saving_against", "command_share", "alternative_rank", "corridor_rank", "folder"}
	if err := cw.Write(head); err != nil {
		return err
	}
	rk := Rank(ix.Rows)
	for i, r := range ix.Rows {
		if !r.Listed() {
			continue
		}
		rec := []string{strconv.Itoa(r.Job), cell(r.Alignment), cell(r.Corridor), r.Alternative,
			r.Status, cell(r.Reason), "", "", "", "", "", "", "", "", rank(rk.Alternative[i]), rank(rk.Corridor[i]), r.Folder}
		if r.Length > 0 {
			rec[6] = Fixed(u.Length(r.Length), 1)
		}
		if p := r.Plan; p != nil {
			rec[7] = strconv.Itoa(p.Drops)
			rec[8], rec[9] = Fixed(u.Volume(p.CutVolume), 1), Fixed(u.Volume(p.FillVolume), 1)
			rec[10] = Fixed(p.TotalCost, 0)
			if p.Saving != nil {
				rec[11], rec[12] = Fixed(*p.Saving, 0), p.SavingAgainst
			}
			rec[13] = Fixed(p.CommandShare, 3)
		}
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// cell is a text cell of index.csv: without the control characters XML
// forbids (a bell or a NUL in a name), neutralised against formulas.
func cell(s string) string { return textsafe.CSVCell(textsafe.XMLChars(s)) }

func rank(n int) string {
	if n == 0 {
		return ""
	}
	return strconv.Itoa(n)
}

// Fixed formats v with prec decimals, without a minus sign on a value that
// rounds to zero.
func Fixed(v float64, prec int) string {
	s := strconv.FormatFloat(v, 'f', prec, 64)
	if strings.HasPrefix(s, "-") && strings.Trim(s[1:], "0.") == "" {
		s = s[1:]
	}
	return s
}

// WriteJSON writes index.json, indented.
func WriteJSON(w io.Writer, ix *Index) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(ix)
}

// ErrIndex is wrapped by the errors of ReadJSON and Merge about an index
// that cannot be used.
var ErrIndex = errors.New("not a usable batch index")

// ReadJSON reads and checks index.json: its format, unit system, and rows
// numbered 1, 2, … in order with known statuses, finite figures and
// folders that stay inside the batch folder (one or two path elements, each
// a name alignment.SafeName leaves unchanged). Unknown members are errors.
func ReadJSON(r io.Reader) (*Index, error) {
	dec := json.NewDecoder(r)
	dec.DisallowUnknownFields()
	var ix Index
	if err := dec.Decode(&ix); err != nil {
		return nil, fmt.Errorf("%w: %v", ErrIndex, err)
	}
	if dec.More() {
		return nil, fmt.Errorf("%w: data after the index", ErrIndex)
	}
	if ix.Format != Format {
		return nil, fmt.Errorf("%w: format %q, want %q", ErrIndex, textsafe.Clip(ix.Format, 60), Format)
	}
	if _, err := ix.System(); err != nil {
		return nil, fmt.Errorf("%w: %v", ErrIndex, err)
	}
	for i, row := range ix.Rows {
		if err := row.check(i + 1); err != nil {
			return nil, fmt.Errorf("%w: job %d: %v", ErrIndex, i+1, err)
		}
	}
	return &ix, nil
}

// check validates row number n of an index read from a file.
func (r Row) check(n int) error {
	if r.Job != n {
		return fmt.Errorf("numbered %d, not %d", r.Job, n)
	}
	switch r.Status {
	case OK, Infeasible, Failed, NotRun, Missing, OtherShard:
	default:
		return fmt.Errorf("unknown status %q", textsafe.Clip(r.Status, 40))
	}
	if (r.Status == OK) != (r.Plan != nil) {
		return errors.New("figures given for a job that is not ok, or missing for one that is")
	}
	nums := append([]float64{r.Length}, r.DropHeights...)
	if p := r.Plan; p != nil {
		nums = append(nums, p.CutVolume, p.FillVolume, p.TotalCost, p.CommandShare)
		if p.Saving != nil {
			nums = append(nums, *p.Saving)
		}
	}
	for _, v := range nums {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return errors.New("a figure is not finite")
		}
	}
	if r.Folder == "" {
		return nil
	}
	parts := strings.Split(r.Folder, "/")
	if len(parts) > 2 {
		return fmt.Errorf("folder %q has more than two path elements", textsafe.Clip(r.Folder, 80))
	}
	for _, p := range parts {
		if p == "" || alignment.SafeName(p) != p {
			return fmt.Errorf("folder %q is not a canalstep job folder", textsafe.Clip(r.Folder, 80))
		}
	}
	return nil
}

// Part is one shard's index and where it came from (for messages).
type Part struct {
	Name  string
	Index *Index
}

// Merge combines the indexes of a batch's shards into the index of the
// whole batch: each job's row is taken from the one part that ran it. The
// parts must come from one batch (the same Batch, unit system and job
// list); a job that two parts ran is an error. A job that no part ran is
// kept with status Missing and listed in missing (job numbers), so the
// merged index shows the gap instead of hiding it. The result equals the
// index of the same batch run whole when nothing is missing.
func Merge(parts []Part) (merged *Index, missing []int, err error) {
	if len(parts) == 0 {
		return nil, nil, fmt.Errorf("%w: no index to merge", ErrIndex)
	}
	first := parts[0]
	out := New(units.SI, first.Index.Batch, "", make([]Row, len(first.Index.Rows)))
	out.Units = first.Index.Units
	from := make([]string, len(out.Rows))
	for _, p := range parts {
		ix := p.Index
		switch {
		case ix.Batch != first.Index.Batch:
			return nil, nil, fmt.Errorf("%w: %s and %s come from different batches (other inputs, design or job file); merge the shards of one batch",
				ErrIndex, textsafe.Terminal(first.Name), textsafe.Terminal(p.Name))
		case ix.Units != first.Index.Units:
			return nil, nil, fmt.Errorf("%w: %s is in %s units and %s in %s; run every shard with the same --units",
				ErrIndex, textsafe.Terminal(first.Name), first.Index.Units, textsafe.Terminal(p.Name), ix.Units)
		case len(ix.Rows) != len(out.Rows):
			return nil, nil, fmt.Errorf("%w: %s has %d jobs and %s %d; merge the shards of one batch",
				ErrIndex, textsafe.Terminal(first.Name), len(out.Rows), textsafe.Terminal(p.Name), len(ix.Rows))
		}
		for i, r := range ix.Rows {
			f := first.Index.Rows[i]
			if r.Alignment != f.Alignment || r.Alternative != f.Alternative {
				return nil, nil, fmt.Errorf("%w: job %d is %s with %s in %s but %s with %s in %s; merge the shards of one batch", ErrIndex, i+1,
					textsafe.Terminal(f.Alignment), f.Alternative, textsafe.Terminal(first.Name), textsafe.Terminal(r.Alignment), r.Alternative, textsafe.Terminal(p.Name))
			}
			if r.Status == OtherShard {
				if from[i] == "" {
					out.Rows[i] = r // a placeholder until a part that ran it
				}
				continue
			}
			if from[i] != "" {
				return nil, nil, fmt.Errorf("%w: job %d (%s, drop heights %s) is in both %s and %s; give each shard's folder once, and shards of one --shard K/N split",
					ErrIndex, i+1, textsafe.Terminal(r.Alignment), r.Alternative, textsafe.Terminal(from[i]), textsafe.Terminal(p.Name))
			}
			out.Rows[i], from[i] = r, p.Name
		}
	}
	for i := range out.Rows {
		if from[i] == "" {
			r := &out.Rows[i]
			r.Status, r.Reason, r.Length, r.Plan, r.Folder = Missing, "in none of the shard folders merged: run its shard and merge again", 0, nil, ""
			missing = append(missing, i+1)
		}
	}
	return out, missing, nil
}

// Counts counts the listed rows by status.
func (ix *Index) Counts() map[string]int {
	c := map[string]int{}
	for _, r := range ix.Rows {
		if r.Listed() {
			c[r.Status]++
		}
	}
	return c
}

// CountText words Counts in a fixed order: "12 jobs: 10 ok, 1 infeasible,
// 1 failed".
func (ix *Index) CountText() string {
	c := ix.Counts()
	n := 0
	for _, v := range c {
		n += v
	}
	var parts []string
	for _, s := range []string{OK, Infeasible, Failed, NotRun, Missing} {
		if c[s] > 0 {
			parts = append(parts, fmt.Sprintf("%d %s", c[s], strings.ReplaceAll(s, "_", " ")))
		}
	}
	word := "jobs"
	if n == 1 {
		word = "job"
	}
	if len(parts) == 0 {
		return fmt.Sprintf("%d %s", n, word)
	}
	return fmt.Sprintf("%d %s: %s", n, word, strings.Join(parts, ", "))
}

// Alternatives returns the distinct alternative labels of the listed rows
// in order of first appearance.
func (ix *Index) Alternatives() []string {
	seen := map[string]bool{}
	var out []string
	for _, r := range ix.Rows {
		if r.Listed() && !seen[r.Alternative] {
			seen[r.Alternative] = true
			out = append(out, r.Alternative)
		}
	}
	return out
}
