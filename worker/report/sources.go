package report

import (
	"regexp"
	"strconv"
	"strings"
)

// The checks of a record name their sources in free text: a published
// work cited in full (authors, title, venue, year, then a note in
// parentheses on what is taken from it), a test standard, or a remark
// ("derived here", "common practice, no source"). The report lists each
// cited work once, numbered, and prints the rest of the text with the
// number in its place; a note that the work was recalled from memory
// moves into the list, where it is said once.

// bibliography is the numbered list of the works a report cites.
type bibliography struct {
	Entries []*work
	byKey   map[string]*work
}

// work is one cited publication or standard.
type work struct {
	N        int
	Citation string   // as the record cites it, without the note
	Uses     []string // what the record takes from it (the notes), each once
	Memory   []string // remarks that it was recalled from memory, each once, capitalized
}

var (
	// citedWork matches a full citation: initials and surnames (joined by
	// "and"), then a comma, the title and venue, and a year; optionally a
	// chapter, section or equation after the year.
	citedWork = regexp.MustCompile(`(?:[A-Z]\.(?:-[A-Z]\.)?\s)+(?:von\s|van\s|de\s)?[A-Z][A-Za-z'-]+(?:\sand\s(?:[A-Z]\.(?:-[A-Z]\.)?\s)+(?:von\s|van\s|de\s)?[A-Z][A-Za-z'-]+)*,\s[^()]*?\b(?:1[89]|20)\d\d\b(?:,\s(?:ch|sec|eq)\.\s[0-9][0-9.]*)?`)
	// standard matches a test standard's designation.
	standard = regexp.MustCompile(`\b(?:ASTM|ISO|EN|DIN|JIS)\s[A-Z]?\d+(?:/[A-Z]?\d+[A-Z]*)*(?:-\d+)?`)
	// memoryNote matches a remark that something was recalled from
	// memory.
	memoryNote = regexp.MustCompile(`(?i)\bfrom memory\b`)
)

func newBibliography() *bibliography { return &bibliography{byKey: map[string]*work{}} }

// cite returns text with every cited work replaced by its number ("[2]")
// and adds the works to b.
func (b *bibliography) cite(text string) string {
	var out strings.Builder
	for {
		loc := nextCitation(text)
		if loc == nil {
			break
		}
		start, end := loc[0], loc[1]
		w := b.add(text[start:end])
		rest := text[end:]
		if note, n := parenthesis(rest); n > 0 {
			b.note(w, note)
			end += n
		}
		out.WriteString(text[:start])
		out.WriteString("[" + strconv.Itoa(w.N) + "]")
		text = text[end:]
	}
	out.WriteString(text)
	return b.memoryAfterCitation(out.String())
}

// nextCitation returns the bounds of the first citation in text, or nil.
func nextCitation(text string) []int {
	a, s := citedWork.FindStringIndex(text), standard.FindStringIndex(text)
	switch {
	case a == nil:
		return s
	case s == nil || a[0] <= s[0]:
		return a
	}
	return s
}

// parenthesis returns the text inside a parenthesis that opens rest (after
// one space at most) and how many bytes of rest it takes, or 0 when rest
// does not start with one or it does not close.
func parenthesis(rest string) (string, int) {
	i := 0
	if strings.HasPrefix(rest, " ") {
		i = 1
	}
	if !strings.HasPrefix(rest[i:], "(") {
		return "", 0
	}
	depth := 0
	for j := i; j < len(rest); j++ {
		switch rest[j] {
		case '(':
			depth++
		case ')':
			depth--
			if depth == 0 {
				return rest[i+1 : j], j + 1
			}
		}
	}
	return "", 0
}

// add returns the entry of citation, numbering it when new.
func (b *bibliography) add(citation string) *work {
	key := strings.Join(strings.Fields(citation), " ")
	if w, ok := b.byKey[key]; ok {
		return w
	}
	w := &work{N: len(b.Entries) + 1, Citation: key}
	b.Entries = append(b.Entries, w)
	b.byKey[key] = w
	return w
}

// note files a citation's note under its uses, and the parts of it that
// say it was recalled from memory under Memory.
func (b *bibliography) note(w *work, note string) {
	var uses []string
	for _, part := range strings.Split(note, ";") {
		part = strings.TrimSpace(part)
		if part == "" {
			continue
		}
		if memoryNote.MatchString(part) {
			w.Memory = appendOnce(w.Memory, capitalize(part))
			continue
		}
		uses = append(uses, part)
	}
	if len(uses) > 0 {
		w.Uses = appendOnce(w.Uses, strings.Join(uses, "; "))
	}
}

// memoryAfterCitation moves a parenthesis that says "from memory" out of
// text into the list entry of the work cited last before it.
func (b *bibliography) memoryAfterCitation(text string) string {
	for from := 0; ; {
		i := strings.Index(text[from:], "(")
		if i < 0 {
			return text
		}
		i += from
		inner, n := parenthesis(text[i:])
		if n == 0 || !memoryNote.MatchString(inner) {
			from = i + 1
			continue
		}
		w := b.lastCited(text[:i])
		if w == nil {
			from = i + 1
			continue
		}
		w.Memory = appendOnce(w.Memory, capitalize(inner))
		cut := i
		if cut > 0 && text[cut-1] == ' ' {
			cut-- // the space before the parenthesis goes with it
		}
		text = text[:cut] + text[i+n:]
		from = cut
	}
}

// lastCited returns the work whose number appears last in text, or nil.
func (b *bibliography) lastCited(text string) *work {
	j := strings.LastIndex(text, "[")
	if j < 0 {
		return nil
	}
	k := strings.Index(text[j:], "]")
	if k < 0 {
		return nil
	}
	n, err := strconv.Atoi(text[j+1 : j+k])
	if err != nil || n < 1 || n > len(b.Entries) {
		return nil
	}
	return b.Entries[n-1]
}

func capitalize(s string) string {
	if s == "" {
		return s
	}
	return strings.ToUpper(s[:1]) + s[1:]
}

func appendOnce(list []string, s string) []string {
	for _, x := range list {
		if x == s {
			return list
		}
	}
	return append(list, s)
}

// Confirm says what would confirm a work recalled from memory.
func (w *work) Confirm() string {
	if standard.MatchString(w.Citation) && !citedWork.MatchString(w.Citation) {
		return "confirm against the current edition of the standard"
	}
	return "confirm against the publication itself"
}
