// Package report writes the folder of a scan: indicators.csv, summary.json,
// SVG and PNG pictures of every indicator (curves with error bands and peak
// markers in 1-D, heat maps with boundary lines in 2-D) and report.html, one
// self-contained page to read in a browser (inline SVG and CSS, no scripts,
// no network): the dataset and model summaries, training curves, every
// picture, the peak table with errors, checks against exact results and the
// caution of design/indicators.md. The folder is assembled in a temporary
// folder beside it and renamed into place, so a reader never sees a
// half-written scan.
package report
