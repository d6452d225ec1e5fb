// Package report renders a verification record as a self-contained HTML
// page for auditors (a summary sheet first, then every case with its
// checks and its plots drawn by gonum/plot, then the numbered sources),
// and the comparison page of two revisions of a card.
package report
