// Package report renders a verification record as a self-contained HTML
// page for auditors, with an SVG plot of every case drawn by gonum/plot.
package report
