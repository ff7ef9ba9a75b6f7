package report

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/clinal/clinal/matrixio"
)

// TestReadLabels: the labels TSV contract (sample_id<TAB>group, header
// optional; the format clinal simulate writes) and its bad-input errors,
// which name file and line.
func TestReadLabels(t *testing.T) {
	ids := []string{"isle1-0001", "isle1-0002", "isle2-0001", "mainland-0001"}
	cases := []struct {
		name    string
		content string
		want    []string // groups per id
		stats   LabelStats
		errLine string // substring of the error ("" for success)
	}{
		{"header and all", "sample_id\tgroup\nisle1-0001\tisle1\nisle1-0002\tisle1\nisle2-0001\tisle2\nmainland-0001\tmainland\n",
			[]string{"isle1", "isle1", "isle2", "mainland"}, LabelStats{Rows: 4, Matched: 4}, ""},
		{"no header, CRLF, blank line, partial", "isle2-0001\tisle2\r\n\r\nisle1-0001\tisle1\r\n",
			[]string{"isle1", "", "isle2", ""}, LabelStats{Rows: 2, Matched: 2, Unlabelled: 2}, ""},
		{"unknown IDs ignored with a count", "isle1-0001\tisle1\nisle9-0001\tisle9\nisle9-0002\tisle9\n",
			[]string{"isle1", "", "", ""}, LabelStats{Rows: 3, Matched: 1, Unknown: 2, Unlabelled: 3}, ""},
		{"empty file", "", []string{"", "", "", ""}, LabelStats{Unlabelled: 4}, ""},
		{"one field", "sample_id\tgroup\nisle1-0001\n", nil, LabelStats{}, ":2: want 2 tab-separated fields (sample_id, group), got 1"},
		{"three fields", "isle1-0001\tisle1\textra\n", nil, LabelStats{}, ":1: want 2 tab-separated fields"},
		{"spaces instead of tab", "isle1-0001 isle1\n", nil, LabelStats{}, ":1: want 2 tab-separated fields"},
		{"empty group", "isle1-0001\tisle1\nisle1-0002\t\n", nil, LabelStats{}, ":2: empty group"},
		{"empty id", "\tisle1\n", nil, LabelStats{}, ":1: empty sample ID"},
		{"padded group", "isle1-0001\t isle1\n", nil, LabelStats{}, ":1: group \" isle1\" has leading or trailing spaces"},
		{"control character", "isle1-0001\tis\x01le\n", nil, LabelStats{}, ":1: group \"is\\x01le\" contains a control character"},
		{"duplicate", "isle1-0001\tisle1\nisle2-0001\tisle2\nisle1-0001\tisle2\n", nil, LabelStats{}, ":3: sample \"isle1-0001\" already labelled on line 1"},
		{"wrong file", "x1\ta\nx2\tb\n", nil, LabelStats{}, "none of its 2 sample IDs is in the cohort"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			path := filepath.Join(t.TempDir(), "labels.tsv")
			if err := os.WriteFile(path, []byte(tc.content), 0o644); err != nil {
				t.Fatal(err)
			}
			got, st, err := ReadLabelsStats(path, ids)
			if tc.errLine != "" {
				if err == nil {
					t.Fatalf("no error, want %q", tc.errLine)
				}
				if !strings.Contains(err.Error(), path) || !strings.Contains(err.Error(), tc.errLine) {
					t.Errorf("error %q, want it to name %s and contain %q", err, path, tc.errLine)
				}
				if !matrixio.IsBadInput(err) {
					t.Errorf("error %q is not bad input (exit 2)", err)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if fmt.Sprint(got) != fmt.Sprint(tc.want) || st != tc.stats {
				t.Errorf("got %q %+v, want %q %+v", got, st, tc.want, tc.stats)
			}
			g2, err := ReadLabels(path, ids)
			if err != nil || fmt.Sprint(g2) != fmt.Sprint(tc.want) {
				t.Errorf("ReadLabels: %q %v", g2, err)
			}
		})
	}
	_, err := ReadLabels(filepath.Join(t.TempDir(), "missing.tsv"), ids)
	if err == nil || !matrixio.IsBadInput(err) || !strings.Contains(err.Error(), "missing.tsv") {
		t.Errorf("missing file: %v, want a bad-input error naming it", err)
	}
}

// ExampleReadLabels shows the labels file of clinal simulate feeding the
// report's colours.
func ExampleReadLabels() {
	dir, _ := os.MkdirTemp("", "labels")
	defer os.RemoveAll(dir)
	path := filepath.Join(dir, "meridian.labels.tsv")
	os.WriteFile(path, []byte("sample_id\tgroup\nisle3-0042\tisle3\nisle9-0001\tisle9\n"), 0o644)
	groups, st, err := ReadLabelsStats(path, []string{"isle3-0042", "mainland-0007"})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%q\n%s\n", groups, st)
	// Output:
	// ["isle3" ""]
	// 1 of 2 samples labelled; 1 IDs in the labels file are not in the cohort (ignored)
}
