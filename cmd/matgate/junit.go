package main

import (
	"encoding/xml"
	"fmt"
	"strconv"
	"strings"

	"matgate/checks"
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
	File     string      `xml:"file,attr,omitempty"`
	Time     string      `xml:"time,attr,omitempty"` // seconds the card took
	Tests    int         `xml:"tests,attr"`
	Failures int         `xml:"failures,attr"`
	Errors   int         `xml:"errors,attr"`
	Skipped  int         `xml:"skipped,attr"`
	Cases    []junitCase `xml:"testcase"`
}

type junitCase struct {
	Name      string        `xml:"name,attr"`
	Classname string        `xml:"classname,attr"`
	File      string        `xml:"file,attr,omitempty"` // the card file
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
	s := junitSuite{Name: o.File, File: o.File}
	if o.seconds > 0 {
		s.Time = strconv.FormatFloat(o.seconds, 'f', 3, 64)
	}
	// Reporters split a class name at its last dot into package and
	// class: the card is the package and the case the class, so neither
	// may carry a dot of its own (a case is named by its amplitude).
	pkg := "card"
	if o.ID != "" {
		s.Name = fmt.Sprintf("%s r%d", o.ID, o.Revision)
		pkg = fmt.Sprintf("%s-r%d", o.ID, o.Revision)
	}
	if o.record == nil {
		// Invalid card or internal error: one testcase that says why.
		body := ""
		for _, p := range o.Problems {
			body += p + "\n"
		}
		jc := junitCase{Name: "card", Classname: pkg + ".card", File: o.File}
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
		class := pkg + "." + strings.ReplaceAll(cs.Name, ".", "_")
		if cs.Skipped != "" {
			s.Cases = append(s.Cases, junitCase{Name: cs.Name, Classname: class, File: o.File, Skipped: &junitMessage{Message: cs.Skipped}})
			s.Skipped++
			continue
		}
		for _, ck := range cs.Checks {
			jc := junitCase{Name: ck.Name, Classname: class, File: o.File}
			var findings string
			for _, f := range o.Findings {
				if f.Case == cs.Name && f.Check == ck.Name {
					findings += "finding: " + f.Text + "\n"
				}
			}
			if !ck.Pass {
				jc.Failure = &junitMessage{
					Message: fmt.Sprintf("%s: value %s %s, reference %s %s, %s", ck.Quantity, g(ck.Value), ck.Unit, g(ck.Reference), ck.Unit, toleranceText(ck)),
					Body:    fmt.Sprintf("%sreference from: %s\ntolerance basis: %s\n", findings, ck.ReferenceSource, ck.ToleranceBasis),
				}
				s.Failures++
			}
			jc.SystemOut = findings
			s.Cases = append(s.Cases, jc)
		}
	}
	s.Tests = len(s.Cases)
	return s
}

// toleranceText words a check's tolerance as its comparison uses it.
func toleranceText(ck checks.Check) string {
	switch {
	case ck.ToleranceKind == "rel":
		return fmt.Sprintf("tolerance %s relative to the reference", g(ck.Tolerance))
	case ck.Bound == "upper":
		return fmt.Sprintf("at most %s %s above the reference", g(ck.Tolerance), ck.Unit)
	case ck.Bound == "lower":
		return fmt.Sprintf("at most %s %s below the reference", g(ck.Tolerance), ck.Unit)
	}
	return fmt.Sprintf("tolerance %s %s", g(ck.Tolerance), ck.Unit)
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
