package report

import (
	"math"

	"tidemark/indicator"
)

// Summary is the content of summary.json (schema: design/indicators.md;
// the keys beyond it are additions).
type Summary struct {
	Source string   `json:"source"`
	Data   string   `json:"data,omitempty"`
	Models []string `json:"models,omitempty"`
	Params []string `json:"params"`
	// Lattice is the scanned dataset's lattice shape (row-major, from its
	// meta); absent when the dataset could not be read.
	Lattice   []int    `json:"lattice,omitempty"`
	Grid      GridInfo `json:"grid"`
	Bootstrap int      `json:"bootstrap"`
	ExactSums bool     `json:"exact_sums"`
	Sources   int      `json:"sources"`
	// Errors states which errors the error bars include.
	Errors     Errors                      `json:"errors"`
	Seed       uint64                      `json:"seed"`
	Indicators map[string]IndicatorSummary `json:"indicators"`
	Boundaries []any                       `json:"boundaries,omitempty"`
	Phases     *PhasesSummary              `json:"phases,omitempty"`
	Zoom       []ZoomSummary               `json:"zoom,omitempty"`
	Notes      []string                    `json:"notes,omitempty"`
	CSVRows    string                      `json:"csv_rows"`
	Caution    string                      `json:"caution"`
	Files      []string                    `json:"files"`
}

// GridInfo describes the grid.
type GridInfo struct {
	// Points is the number of grid points of the data.
	Points int `json:"points"`
	// Refine is the refinement factor R.
	Refine int `json:"refine"`
	// Shape is the number of data values per axis.
	Shape []int `json:"shape"`
	// Scanned is the number of points of the (refined) scanned grid.
	Scanned int `json:"scanned_points"`
}

// IndicatorSummary lists one curve's peaks.
type IndicatorSummary struct {
	Placement string        `json:"placement"`
	Axis      string        `json:"axis,omitempty"`
	Peaks     []PeakSummary `json:"peaks"`
}

// PeakSummary is one peak in summary.json.
type PeakSummary struct {
	At         []float64 `json:"at"`
	Err        []float64 `json:"err"`
	Height     float64   `json:"height"`
	HeightErr  float64   `json:"height_err"`
	Prominence float64   `json:"prominence"`
	AboveNoise bool      `json:"tested_against_noise"`
	// Unseen is the peak on the snapshots the model did not train on.
	Unseen *UnseenSummary `json:"unseen,omitempty"`
}

// UnseenSummary is a peak's position on the curve of the snapshots the
// model did not train on (indicator.Unseen), along the peak's axis.
type UnseenSummary struct {
	At    float64 `json:"at"`
	Err   float64 `json:"err"`
	Shift float64 `json:"shift"`
	Noise float64 `json:"noise"`
	Added float64 `json:"added_to_err"`
}

// ZoomSummary is the second pass around one peak.
type ZoomSummary struct {
	Around []float64 `json:"around"`
	// Axis is the parameter the window runs along.
	Axis       string                      `json:"axis"`
	From       float64                     `json:"from"`
	To         float64                     `json:"to"`
	Points     int                         `json:"points"`
	Indicators map[string]IndicatorSummary `json:"indicators"`
}

func clean(v float64) float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return 0
	}
	return v
}

func summarize(curves []*indicator.Curve, names []string) map[string]IndicatorSummary {
	out := map[string]IndicatorSummary{}
	for _, c := range curves {
		is := IndicatorSummary{Placement: c.Placement, Peaks: []PeakSummary{}}
		if c.Axis >= 0 && len(names) > 1 {
			is.Axis = names[c.Axis]
		}
		for _, p := range c.Peaks {
			is.Peaks = append(is.Peaks, PeakSummary{At: p.At, Err: p.Err, Height: clean(p.Height), HeightErr: clean(p.HeightErr), Prominence: clean(p.Prominence), AboveNoise: p.Tested, Unseen: unseenSummary(p.Unseen)})
		}
		out[c.Name] = is
	}
	return out
}

// NewSummary builds the summary of a scan.
func NewSummary(res *indicator.Result, info Info) *Summary {
	s := &Summary{
		Source: info.Source, Data: info.Data, Models: info.Models, Params: res.Names,
		Grid:      GridInfo{Points: res.Data.K(), Refine: max(1, info.Refine), Scanned: res.Layout.K()},
		Bootstrap: res.Bootstrap, ExactSums: res.ExactSums, Sources: res.Sources, Seed: info.Seed,
		Errors:     ErrorStatement(info.Source, res.Bootstrap, res.Sources, res.ExactSums, res.UnseenChecked),
		Indicators: summarize(res.Curves, res.Names),
		Boundaries: boundaryList(res),
		Phases:     phasesSummary(res),
		Notes:      res.Notes,
		Caution:    indicator.Caution,
		CSVRows:    "indicators.csv has one row per position, the union of the grid points (curves with placement \"points\"), the midpoints between neighbouring grid points (placement \"midpoints\") and, in 2-D, the centres of the grid's cells (placement \"cell centres\"); cells are empty where a curve has no value",
	}
	for _, a := range res.Data.Axes {
		s.Grid.Shape = append(s.Grid.Shape, len(a))
	}
	for _, z := range res.Zoom {
		ax := z.Layout.Axes[z.Axis]
		s.Zoom = append(s.Zoom, ZoomSummary{Around: z.Around, Axis: res.Names[z.Axis], From: ax[0], To: ax[len(ax)-1], Points: len(ax), Indicators: summarize(z.Curves, res.Names)})
	}
	return s
}

func unseenSummary(u *indicator.Unseen) *UnseenSummary {
	if u == nil {
		return nil
	}
	return &UnseenSummary{At: clean(u.At), Err: clean(u.Err), Shift: clean(u.Shift), Noise: clean(u.Noise), Added: clean(u.Added)}
}
