package survey

import (
	"fmt"
	"io"

	"canalstep/report/landxml"
)

// Stager is where an alignment folder's files are written before the
// folder is committed as a whole: report.Stager, and outdir's Stage.
type Stager interface {
	WriteFile(name string, write func(io.Writer) error) error
	Path(name string) (string, error)
}

// File names of the deliverables.
const (
	StakesFile  = "stakes.csv"
	GeoJSONFile = "plan.geojson"
	GPKGFile    = "plan.gpkg"
	LandXMLFile = "plan.xml"
)

// WriteFiles writes the four deliverables of one planned alignment into st:
// stakes.csv, plan.geojson, plan.gpkg and plan.xml, computing the stake
// points once. It stops at the first error; the caller discards the staged
// folder then.
func WriteFiles(st Stager, in *Input) error {
	stakes, err := Stakes(in)
	if err != nil {
		return err
	}
	h, err := NewHeader(in)
	if err != nil {
		return err
	}
	doc, err := LandXMLDocument(in, stakes)
	if err != nil {
		return err
	}
	if err := st.WriteFile(StakesFile, func(w io.Writer) error { return WriteStakesCSV(w, stakes, h) }); err != nil {
		return fmt.Errorf("%s: %w", StakesFile, err)
	}
	if err := st.WriteFile(GeoJSONFile, func(w io.Writer) error { return WritePlanGeoJSON(w, in, stakes) }); err != nil {
		return fmt.Errorf("%s: %w", GeoJSONFile, err)
	}
	path, err := st.Path(GPKGFile)
	if err == nil {
		err = WritePlanGPKG(path, in, stakes)
	}
	if err != nil {
		return fmt.Errorf("%s: %w", GPKGFile, err)
	}
	if err := st.WriteFile(LandXMLFile, func(w io.Writer) error { return landxml.Write(w, doc) }); err != nil {
		return fmt.Errorf("%s: %w", LandXMLFile, err)
	}
	return nil
}
