package main

import (
	"encoding/json"
	"io"
	"net/url"
	"path/filepath"
	"strings"

	"matgate/worker"
)

// SARIF 2.1.0 output of check: one run of the tool "matgate", one result
// per located error and warning, with the rule ids below.
//
// References:
//   - OASIS, Static Analysis Results Interchange Format (SARIF) Version
//     2.1.0, OASIS Standard, 27 March 2020 (sec. 3.13 sarifLog, 3.14 run,
//     3.19 toolComponent, 3.27 result, 3.28 location, 3.29
//     physicalLocation, 3.30 region, 3.49 reportingDescriptor).

// sarifSchemaURI is the $schema of the output: where OASIS publishes the
// SARIF 2.1.0 JSON schema (errata 01 of the standard).
const sarifSchemaURI = "https://docs.oasis-open.org/sarif/sarif/v2.1.0/errata01/os/schemas/sarif-schema-2.1.0.json"

// sarifRules are the rules of check, in the order of the driver's rules
// array (a result's ruleIndex).
var sarifRules = []struct{ id, text string }{
	{ruleUnreadable, "The card file cannot be read."},
	{ruleFormat, "The card does not parse, or does not follow the matgate.card/1 schema."},
	{rulePlausibility, "A value of the card is physically implausible for a metal, its units are off, or a stated derived value does not match."},
	{worker.RuleDuplicateRevision, "Two cards of one run have the same id and revision but different content."},
	{worker.RuleUnbumpedRevision, "A card changes the content of an id and revision that the records directory holds: a changed card needs a new revision."},
	{worker.RuleRevisionBelowStored, "A card's revision is below the latest stored revision of its id."},
}

type (
	sarifLog struct {
		Schema  string     `json:"$schema"`
		Version string     `json:"version"`
		Runs    []sarifRun `json:"runs"`
	}
	sarifRun struct {
		Tool       sarifTool         `json:"tool"`
		ColumnKind string            `json:"columnKind"`
		Results    []json.RawMessage `json:"results"`
	}
	sarifTool struct {
		Driver sarifDriver `json:"driver"`
	}
	sarifDriver struct {
		Name    string      `json:"name"`
		Version string      `json:"version"`
		Rules   []sarifRule `json:"rules"`
	}
	sarifRule struct {
		ID                   string       `json:"id"`
		ShortDescription     sarifMessage `json:"shortDescription"`
		DefaultConfiguration struct {
			Level string `json:"level"`
		} `json:"defaultConfiguration"`
	}
	sarifMessage struct {
		Text string `json:"text"`
	}
	sarifResult struct {
		RuleID           string          `json:"ruleId"`
		RuleIndex        int             `json:"ruleIndex"`
		Level            string          `json:"level"` // error or warning
		Message          sarifMessage    `json:"message"`
		Locations        []sarifLocation `json:"locations,omitempty"`
		RelatedLocations []sarifLocation `json:"relatedLocations,omitempty"`
		Properties       *sarifProps     `json:"properties,omitempty"`
	}
	sarifLocation struct {
		ID               *int                  `json:"id,omitempty"` // for relatedLocations
		PhysicalLocation sarifPhysicalLocation `json:"physicalLocation"`
		Message          *sarifMessage         `json:"message,omitempty"`
	}
	sarifPhysicalLocation struct {
		ArtifactLocation struct {
			URI       string `json:"uri"`
			URIBaseID string `json:"uriBaseId,omitempty"`
		} `json:"artifactLocation"`
		Region *sarifRegion `json:"region,omitempty"`
	}
	sarifRegion struct {
		StartLine   int `json:"startLine"`
		StartColumn int `json:"startColumn,omitempty"`
	}
	// sarifProps is the property bag of a result: the JSON pointer of the
	// offending value and the value as written.
	sarifProps struct {
		Pointer string `json:"pointer"`
		Value   string `json:"value,omitempty"`
	}
)

// sarifWriter streams a SARIF log: the head (tool, rules) on the first
// card, then each result, then the tail.
type sarifWriter struct {
	w       io.Writer
	tail    string
	results int
}

// resultsIndent is the indent of a result inside the log as
// json.MarshalIndent lays it out: log, runs, run, results.
const resultsIndent = "        "

func (s *sarifWriter) begin() error {
	if s.tail != "" {
		return nil
	}
	d := sarifDriver{Name: "matgate", Version: version}
	for _, r := range sarifRules {
		sr := sarifRule{ID: r.id, ShortDescription: sarifMessage{r.text}}
		sr.DefaultConfiguration.Level = "error"
		d.Rules = append(d.Rules, sr)
	}
	b, err := json.MarshalIndent(sarifLog{Schema: sarifSchemaURI, Version: "2.1.0", Runs: []sarifRun{{
		Tool: sarifTool{Driver: d}, ColumnKind: "unicodeCodePoints", Results: []json.RawMessage{},
	}}}, "", "  ")
	if err != nil {
		return err
	}
	const marker = `"results": []`
	head, tail, ok := strings.Cut(string(b), marker)
	if !ok || strings.Contains(tail, marker) {
		panic("sarif: the results array is not where the writer expects it")
	}
	s.tail = tail + "\n"
	_, err = io.WriteString(s.w, head+`"results": [`)
	return err
}

func (s *sarifWriter) card(r checkResult) error {
	if err := s.begin(); err != nil {
		return err
	}
	for _, d := range r.diags {
		res := sarifResult{RuleID: d.rule, RuleIndex: sarifRuleIndex(d.rule), Level: d.Severity.String(),
			Message: sarifMessage{d.Message}}
		if d.Pointer != "" {
			res.Message.Text = d.Pointer + ": " + d.Message
			res.Properties = &sarifProps{Pointer: d.Pointer, Value: d.Value}
		}
		if loc, ok := sarifLocationOf(d.File, d.Pos.Line, d.Pos.Column); ok {
			res.Locations = []sarifLocation{loc}
		}
		if o := d.other; o != nil {
			if loc, ok := sarifLocationOf(o.File, o.Pos.Line, o.Pos.Column); ok {
				id := 1
				loc.ID, loc.Message = &id, &sarifMessage{"the other card of id " + o.ID + " and this revision"}
				res.RelatedLocations = []sarifLocation{loc}
			}
		}
		b, err := json.MarshalIndent(res, resultsIndent, "  ")
		if err != nil {
			return err
		}
		sep := ","
		if s.results == 0 {
			sep = ""
		}
		s.results++
		if _, err := io.WriteString(s.w, sep+"\n"+resultsIndent+string(b)); err != nil {
			return err
		}
	}
	return nil
}

func (s *sarifWriter) close(int, int) error {
	if err := s.begin(); err != nil {
		return err
	}
	end := "]"
	if s.results > 0 {
		end = "\n" + resultsIndent[2:] + "]"
	}
	_, err := io.WriteString(s.w, end+s.tail)
	return err
}

func sarifRuleIndex(id string) int {
	for i, r := range sarifRules {
		if r.id == id {
			return i
		}
	}
	panic("sarif: rule " + id + " is not in sarifRules")
}

// sarifLocationOf is the location of a place in a card file: a relative
// URI reference under %SRCROOT% (the folder check ran in, as code-review
// tools take it) or a file URI for an absolute path. Standard input has
// no location.
func sarifLocationOf(file string, line, col int) (sarifLocation, bool) {
	var l sarifLocation
	if file == "" || file == stdinName {
		return l, false
	}
	p := filepath.ToSlash(filepath.Clean(file))
	if filepath.IsAbs(file) {
		l.PhysicalLocation.ArtifactLocation.URI = (&url.URL{Scheme: "file", Path: p}).String()
	} else {
		l.PhysicalLocation.ArtifactLocation.URI = (&url.URL{Path: p}).String()
		l.PhysicalLocation.ArtifactLocation.URIBaseID = "%SRCROOT%"
	}
	if line > 0 {
		l.PhysicalLocation.Region = &sarifRegion{StartLine: line, StartColumn: col}
	}
	return l, true
}
