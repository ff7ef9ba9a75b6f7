package report

import (
	"bufio"
	"errors"
	"fmt"
	"os"
	"strings"
	"unicode"

	"github.com/clinal/clinal/matrixio"
)

// LabelStats says how a labels file matched the cohort.
type LabelStats struct {
	Rows       int // data rows read (header and blank lines not counted)
	Matched    int // rows whose sample ID is in the cohort
	Unknown    int // rows whose sample ID is not in the cohort (ignored)
	Unlabelled int // cohort samples the file does not name
}

// String renders the statistics for a report or a log line.
func (s LabelStats) String() string {
	return fmt.Sprintf("%d of %d samples labelled; %d IDs in the labels file are not in the cohort (ignored)",
		s.Matched, s.Matched+s.Unlabelled, s.Unknown)
}

// maxLabelLine bounds one line of a labels file.
const maxLabelLine = 1 << 20

// ReadLabels reads a labels file, a TSV of sample_id<TAB>group with an
// optional header line whose first field is "sample_id", and returns the
// group of each of ids in order ("" for samples the file does not name).
// IDs the file names that are not in ids are ignored (see ReadLabelsStats
// for their count). Malformed lines, empty fields, control characters and
// repeated IDs are bad input naming the file and line; so is a file none
// of whose IDs are in ids, which is almost always the wrong file.
func ReadLabels(path string, ids []string) ([]string, error) {
	g, _, err := ReadLabelsStats(path, ids)
	return g, err
}

// ReadLabelsStats is ReadLabels that also returns how the file matched.
func ReadLabelsStats(path string, ids []string) ([]string, LabelStats, error) {
	var st LabelStats
	f, err := os.Open(path)
	if err != nil {
		return nil, st, fmt.Errorf("labels: %w", err)
	}
	defer f.Close()
	index := make(map[string]int, len(ids))
	for i, id := range ids {
		index[id] = i
	}
	groups := make([]string, len(ids))
	seen := make(map[string]int) // sample ID -> line
	sc := bufio.NewScanner(f)
	sc.Buffer(make([]byte, 0, 64<<10), maxLabelLine)
	line := 0
	for sc.Scan() {
		line++
		text := strings.TrimSuffix(sc.Text(), "\r")
		if strings.TrimSpace(text) == "" {
			continue
		}
		fields := strings.Split(text, "\t")
		if len(fields) != 2 {
			return nil, st, matrixio.BadInput("%s:%d: want 2 tab-separated fields (sample_id, group), got %d", path, line, len(fields))
		}
		id, group := fields[0], fields[1]
		if line == 1 && strings.EqualFold(id, "sample_id") {
			continue
		}
		if err := checkLabelField("sample ID", id); err != nil {
			return nil, st, matrixio.BadInput("%s:%d: %v", path, line, err)
		}
		if err := checkLabelField("group", group); err != nil {
			return nil, st, matrixio.BadInput("%s:%d: %v", path, line, err)
		}
		if prev, ok := seen[id]; ok {
			return nil, st, matrixio.BadInput("%s:%d: sample %q already labelled on line %d", path, line, id, prev)
		}
		seen[id] = line
		st.Rows++
		i, ok := index[id]
		if !ok {
			st.Unknown++
			continue
		}
		groups[i] = group
		st.Matched++
	}
	if err := sc.Err(); err != nil {
		if errors.Is(err, bufio.ErrTooLong) {
			return nil, st, matrixio.BadInput("%s:%d: line longer than %d bytes", path, line+1, maxLabelLine)
		}
		return nil, st, fmt.Errorf("labels %s: %w", path, err)
	}
	st.Unlabelled = len(ids) - st.Matched
	if st.Rows > 0 && st.Matched == 0 && len(ids) > 0 {
		return nil, st, matrixio.BadInput("%s: none of its %d sample IDs is in the cohort (first cohort ID %q)", path, st.Rows, ids[0])
	}
	return groups, st, nil
}

// checkLabelField rejects empty fields, surrounding spaces and control
// characters, which would make the legend ambiguous.
func checkLabelField(what, s string) error {
	if s == "" {
		return fmt.Errorf("empty %s", what)
	}
	if strings.TrimSpace(s) != s {
		return fmt.Errorf("%s %q has leading or trailing spaces", what, s)
	}
	for _, r := range s {
		if unicode.IsControl(r) || r == unicode.ReplacementChar {
			return fmt.Errorf("%s %q contains a control character or invalid UTF-8", what, s)
		}
	}
	return nil
}
