// Package report writes the folder of a scan: indicators.csv, summary.json
// and SVG and PNG pictures of every indicator (curves with error bands and
// peak markers in 1-D, heat maps with boundary lines in 2-D). The folder is
// assembled in a temporary folder beside it and renamed into place, so a
// reader never sees a half-written scan.
package report
