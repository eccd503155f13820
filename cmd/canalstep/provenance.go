package main

import (
	"crypto/sha256"
	"encoding/hex"
	"io"
	"os"
	"strconv"
	"sync"
	"time"

	"canalstep/planner"
	"canalstep/report"
	"canalstep/report/textsafe"
	"canalstep/terrain"
)

// provenance records where the run's numbers come from: the version, the
// command line, every input file with its SHA-256, the DEM's CRS and cell
// size, and the inputs' date (the newest input file's modification date,
// or SOURCE_DATE_EPOCH when set): never the clock, so a rerun on the same
// inputs writes the same bytes.
func (s *planSetup) provenance(info terrain.Info) (report.Provenance, error) {
	p := report.Provenance{Version: version(), CommandLine: "canalstep " + s.name + " " + quoteArgs(s.args),
		DEMCRS: info.CRSWKT, DEMCellSize: describeDEM(info).CellSize}
	if info.EPSG > 0 {
		p.DEMCRS = "EPSG:" + strconv.Itoa(info.EPSG)
	}
	var newest time.Time
	for _, in := range []struct{ role, path string }{{"dem", s.ground.dem}, {"alignment", s.ground.alignment}, {"design", s.designPath()}} {
		if in.path == "" {
			continue
		}
		f, mod, err := hashFile(in.role, in.path)
		if err != nil {
			return p, err
		}
		p.Inputs = append(p.Inputs, f)
		if mod.After(newest) {
			newest = mod
		}
	}
	if sde := os.Getenv("SOURCE_DATE_EPOCH"); sde != "" {
		if sec, err := strconv.ParseInt(sde, 10, 64); err == nil {
			newest = time.Unix(sec, 0)
		}
	}
	p.InputsDate = newest.UTC().Format("2006-01-02")
	report.SetPDFDate(newest.UTC().Truncate(24 * time.Hour))
	return p, nil
}

// designPath is the --design file, or "".
func (s *planSetup) designPath() string {
	if s.file == nil {
		return ""
	}
	return s.file.path
}

// hashes caches each input's hash for the life of the process (a batch
// hashes a large DEM once), keyed by path, size and modification time.
var hashes sync.Map

type hashKey struct {
	path string
	size int64
	mod  time.Time
}

// hashFile returns an input file's record and its modification time. A
// /vsi… path or other non-file GDAL name is recorded without a hash.
func hashFile(role, path string) (report.InputFile, time.Time, error) {
	st, err := os.Stat(path)
	if err != nil {
		return report.InputFile{Role: role, Path: path}, time.Time{}, nil // a GDAL virtual path: nothing to hash here
	}
	key := hashKey{path, st.Size(), st.ModTime()}
	if v, ok := hashes.Load(key); ok {
		return v.(report.InputFile), st.ModTime(), nil
	}
	f, err := os.Open(path)
	if err != nil {
		return report.InputFile{}, time.Time{}, inputf("cannot read the %s file %s: %v", role, textsafe.Terminal(path), err)
	}
	defer f.Close()
	h := sha256.New()
	n, err := io.Copy(h, f)
	if err != nil {
		return report.InputFile{}, time.Time{}, inputf("cannot read the %s file %s: %v", role, textsafe.Terminal(path), err)
	}
	in := report.InputFile{Role: role, Path: path, SHA256: hex.EncodeToString(h.Sum(nil)), Bytes: n}
	hashes.Store(key, in)
	return in, st.ModTime(), nil
}

// bestAlternative is the index of the least-cost feasible alternative, or
// 0 when none is feasible.
func bestAlternative(alts []planner.Alternative) int {
	best := -1
	for i, a := range alts {
		if a.Err == nil && a.Result != nil && (best < 0 || a.Result.Totals.TotalCost < alts[best].Result.Totals.TotalCost) {
			best = i
		}
	}
	return max(best, 0)
}
