// Package worker runs the verification of a card: the one function that
// both the in-process path (matgate verify) and the queue service use, so
// that both give the same record and the same neutral card.
package worker
