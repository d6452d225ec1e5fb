package main

import (
	"encoding/xml"
	"fmt"
	"strconv"
)

// JUnit XML as CI servers read it: one testsuite a card, one testcase a
// check, a skipped testcase for a case that does not apply, a failure with
// value, reference and tolerance, and the findings on a check (a failed
// one's or a near miss of a passing one) in its system-out.
type junitSuites struct {
	XMLName  xml.Name     `xml:"testsuites"`
	Name     string       `xml:"name,attr"`
	Tests    int          `xml:"tests,attr"`
	Failures int          `xml:"failures,attr"`
	Errors   int          `xml:"errors,attr"`
	Suites   []junitSuite `xml:"testsuite"`
}

type junitSuite struct {
	Name     string      `xml:"name,attr"`
	Tests    int         `xml:"tests,attr"`
	Failures int         `xml:"failures,attr"`
	Errors   int         `xml:"errors,attr"`
	Skipped  int         `xml:"skipped,attr"`
	Cases    []junitCase `xml:"testcase"`
}

type junitCase struct {
	Name      string        `xml:"name,attr"`
	Classname string        `xml:"classname,attr"`
	Failure   *junitMessage `xml:"failure,omitempty"`
	Error     *junitMessage `xml:"error,omitempty"`
	Skipped   *junitMessage `xml:"skipped,omitempty"`
	// SystemOut carries the findings on the check (see checks.Finding),
	// which a passing check would otherwise not show.
	SystemOut string `xml:"system-out,omitempty"`
}

type junitMessage struct {
	Message string `xml:"message,attr"`
	Body    string `xml:",chardata"`
}

func g(v float64) string { return strconv.FormatFloat(v, 'g', 8, 64) }

// junit returns the card's testsuite.
func (o verifyOutcome) junit() junitSuite {
	s := junitSuite{Name: o.File}
	if o.ID != "" {
		s.Name = fmt.Sprintf("%s r%d", o.ID, o.Revision)
	}
	if o.record == nil {
		// Invalid card or internal error: one testcase that says why.
		body := ""
		for _, p := range o.Problems {
			body += p + "\n"
		}
		jc := junitCase{Name: "card", Classname: s.Name}
		msg := &junitMessage{Message: o.Status + ": " + o.File, Body: body}
		if o.Status == "invalid" {
			jc.Failure = msg
			s.Failures++
		} else {
			jc.Error = msg
			s.Errors++
		}
		s.Cases, s.Tests = []junitCase{jc}, 1
		return s
	}
	for _, cs := range o.record.Cases {
		class := s.Name + "." + cs.Name
		if cs.Skipped != "" {
			s.Cases = append(s.Cases, junitCase{Name: cs.Name, Classname: class, Skipped: &junitMessage{Message: cs.Skipped}})
			s.Skipped++
			continue
		}
		for _, ck := range cs.Checks {
			jc := junitCase{Name: ck.Name, Classname: class}
			if !ck.Pass {
				jc.Failure = &junitMessage{
					Message: fmt.Sprintf("%s: value %s %s, reference %s %s, tolerance %s (%s)", ck.Quantity, g(ck.Value), ck.Unit, g(ck.Reference), ck.Unit, g(ck.Tolerance), ck.ToleranceKind),
					Body:    fmt.Sprintf("reference from: %s\ntolerance basis: %s\n", ck.ReferenceSource, ck.ToleranceBasis),
				}
				s.Failures++
			}
			for _, f := range o.Findings {
				if f.Case == cs.Name && f.Check == ck.Name {
					jc.SystemOut += "finding: " + f.Text + "\n"
				}
			}
			s.Cases = append(s.Cases, jc)
		}
	}
	s.Tests = len(s.Cases)
	return s
}

func writeJUnit(path string, suites []junitSuite) error {
	all := junitSuites{Name: "matgate verify", Suites: suites}
	for _, s := range suites {
		all.Tests += s.Tests
		all.Failures += s.Failures
		all.Errors += s.Errors
	}
	b, err := xml.MarshalIndent(all, "", "  ")
	if err != nil {
		return err
	}
	return writeFileAtomic(path, append([]byte(xml.Header), append(b, '\n')...))
}
