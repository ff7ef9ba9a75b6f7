package main

import (
	"bytes"
	"context"
	"encoding/binary"
	"encoding/json"
	"hash/crc32"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"syscall"
	"testing"

	"github.com/klauspost/compress/zstd"
)

// TestBadInputBattery is the second bad-input battery of issue 9 (the
// first is TestCommandBadInput in import_test.go, whose 11 cases are not
// repeated here; matrixio's TestImportBadInput and TestImportDenseBadInput
// and qc_test.go's TestQCBadInput cover more at the package level). Each
// row is a malformed input or argument to import, inspect, export, qc or
// pca; the command must exit 2 with one line on stderr containing the
// expected text (IN stands for the case's input path, OUT for its output)
// and leave the output directory as it found it: no final file and no
// hidden *.partial temporary.
//
// The expected messages are clinal's own (matrixio, qc); the rules they
// enforce come from the VCF 4.2 specification (header and data line
// layout), RFC 1952 (gzip), the SAM/BAM specification section 4.1 (BGZF),
// the UCSC BED convention (0-based half-open, start <= end), store.go (the
// .clinal layout) and design.md (flags, exit codes).
//
// Decisions documented here:
//   - A named pipe given as an input (VCF, dense matrix, sample list, BED)
//     is read as a stream, like standard input, so process substitution
//     works; the command waits for the writer, and SIGINT/SIGTERM end the
//     wait (kill_test.go). The "fifo" cases below feed a malformed file
//     through a pipe and get the same line-numbered error as a file.
//   - A named pipe, directory or device given as a STORE is refused at
//     once: a store is read from its end.
//   - Unreadable files (mode 000) cannot be tested as root, who reads them
//     anyway: that case skips with a note when run as root.
func TestBadInputBattery(t *testing.T) {
	fx := t.TempDir()
	write := func(name string, data []byte) string {
		p := filepath.Join(fx, name)
		if err := os.WriteFile(p, data, 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	storePath, good := impStoreWithChunks(t, fx)
	goodVCF := write("good.vcf", []byte(impVCF(20)))
	dirIn := filepath.Join(fx, "a-directory")
	os.Mkdir(dirIn, 0o755)
	oneRec := func(rec string) []byte { return []byte(impVCF(2) + rec + "\n") }

	// Store variants: the header JSON rewritten (with a valid checksum; the
	// rest of the file is left as it was, which the checks below never
	// reach), the footer's checksum broken, the file cut in half.
	withMeta := func(edit func(map[string]any)) []byte {
		le := binary.LittleEndian
		ml := le.Uint32(good[12:])
		var m map[string]any
		if err := json.Unmarshal(good[16:16+ml], &m); err != nil {
			t.Fatal(err)
		}
		edit(m)
		mj, _ := json.Marshal(m)
		b := append([]byte(nil), good[:12]...)
		b = le.AppendUint32(b, uint32(len(mj)))
		b = append(b, mj...)
		b = le.AppendUint32(b, crc32.Checksum(mj, crc32.MakeTable(crc32.Castagnoli)))
		return append(b, good[16+ml+4:]...)
	}
	withVersion := func(v uint32) []byte {
		b := append([]byte(nil), good...)
		binary.LittleEndian.PutUint32(b[8:], v)
		return b
	}
	footerCRC := append([]byte(nil), good...)
	footerCRC[len(footerCRC)-10] ^= 0xff // the footer CRC32C (bytes 52..55 of the 64)
	metaFlip := append([]byte(nil), good...)
	metaFlip[20] ^= 0x01 // inside the header JSON

	// Compressed variants of a valid VCF.
	zst := func(b []byte) []byte {
		e, _ := zstd.NewWriter(nil)
		defer e.Close()
		return e.EncodeAll(b, nil)
	}(bytes.Repeat([]byte(impVCF(400)), 1))
	bgzfPath := filepath.Join(fx, "good.vcf.gz")
	if code, _, errs := impRun(t, "", "export", "-o", bgzfPath, storePath); code != 0 {
		t.Fatal(errs)
	}
	bg, _ := os.ReadFile(bgzfPath)
	bgCRC := append([]byte(nil), bg...)
	// The CRC32 of the first BGZF member: its size is BSIZE+1 (bytes 16-17),
	// the CRC the 8 bytes before its end (SAM/BAM spec 4.1).
	bsize := int(binary.LittleEndian.Uint16(bg[16:])) + 1
	bgCRC[bsize-8] ^= 0xff

	type tcase struct {
		name  string
		setup func(t *testing.T, out string) (in string) // makes the input; out is the output directory
		args  func(in, out string) []string
		want  string
		fifo  []byte // when set, in is a named pipe fed these bytes
		root  bool   // cannot fail when run as root
	}
	file := func(name string, data []byte) func(*testing.T, string) string {
		return func(*testing.T, string) string { return write(name, data) }
	}
	path := func(p string) func(*testing.T, string) string { return func(*testing.T, string) string { return p } }
	imp := func(extra ...string) func(in, out string) []string {
		return func(in, out string) []string {
			return append(append([]string{"import", "-o", filepath.Join(out, "s.clinal")}, extra...), in)
		}
	}
	qcStore := func(in, out string) []string { return []string{"qc", in, "-o", filepath.Join(out, "q")} }
	qcFlag := func(flag string) func(in, out string) []string {
		return func(in, out string) []string {
			return []string{"qc", storePath, "-o", filepath.Join(out, "q"), flag, in}
		}
	}
	pca := func(extra ...string) func(in, out string) []string {
		return func(in, out string) []string {
			return append([]string{"pca", in, "-o", filepath.Join(out, "p")}, extra...)
		}
	}
	inspect := func(in, _ string) []string { return []string{"inspect", "--verify", in} }
	cases := []tcase{
		// VCF import: where the input is and what kind of file it is.
		{name: "VCF input is a directory", setup: path(dirIn), args: imp(), want: "IN: is a directory, not a file"},
		{name: "VCF input is a named pipe carrying a bad record", args: imp(), fifo: oneRec("1\t7\tx\tA\tG\t.\t.\t.\tGT\t0/0\t0/1\t0/3"),
			want: `IN:7: sample 3: GT "0/3" has allele index 3 beyond the 1 ALT allele(s)`},
		{name: "VCF input unreadable (mode 000)", root: true, setup: func(t *testing.T, _ string) string {
			p := write("secret.vcf", []byte(impVCF(3)))
			os.Chmod(p, 0)
			return p
		}, args: imp(), want: "permission denied"},
		{name: "empty gzip member", setup: file("empty.vcf.gz", impGzip("")), args: imp(), want: "IN: empty input (not a VCF file)"},
		{name: "gzip with garbage after the member", setup: file("trail.vcf.gz", append(impGzip(impVCF(5)), "not gzip at all"...)), args: imp(),
			want: "IN:10: corrupt gzip input: gzip: invalid header"},
		{name: "zstd input cut short", setup: file("cut.vcf.zst", zst[:len(zst)/2]), args: imp(), want: "IN:1: truncated zstd input (unexpected end of file)"},
		{name: "BGZF block with a wrong CRC32", setup: file("crc.vcf.gz", bgCRC), args: imp(), want: "IN:1: corrupt BGZF block at byte 0: CRC32 mismatch"},
		{name: "column 9 not FORMAT", setup: file("noformat.vcf", []byte(strings.Replace(impVCF(2), "\tFORMAT\t", "\tFMT\t", 1))), args: imp(),
			want: `IN:4: #CHROM line: column 9 is "FMT", expected "FORMAT"`},
		{name: "sites-only VCF", setup: file("sites.vcf", []byte("##fileformat=VCFv4.2\n#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\n1\t5\tx\tA\tG\t.\t.\t.\n")), args: imp(),
			want: "IN:2: #CHROM line has no sample columns"},
		{name: "empty sample ID", setup: file("emptyid.vcf", []byte(strings.Replace(impVCF(2), "\tisle4-0002", "\t", 1))), args: imp(),
			want: "IN:4: sample column 2: empty sample ID"},
		{name: "control character in marker ID", setup: file("ctlid.vcf", oneRec("1\t7\trs\x017\tA\tG\t.\t.\t.\tGT\t0/0\t0/1\t1/1")), args: imp(),
			want: `IN:7: ID "rs\x017" has a control character (0x01) at byte 2`},
		{name: "empty REF", setup: file("noref.vcf", oneRec("1\t7\trs7\t\tG\t.\t.\t.\tGT\t0/0\t0/1\t1/1")), args: imp(), want: "IN:7: empty REF or ALT column"},
		{name: "DS not a number", setup: file("ds.vcf", oneRec("1\t7\trs7\tA\tG\t.\t.\t.\tDS\t0.5\tabc\t1")), args: imp("--field", "DS"),
			want: `IN:7: sample 2: DS value "abc" is not a finite number`},
		{name: "split: empty ALT allele", setup: file("emptyalt.vcf", oneRec("1\t7\trs7\tA\tG,,T\t.\t.\t.\tGT\t0/0\t0/1\t1/2")), args: imp("--split-multiallelic"),
			want: "IN:7: empty allele in ALT"},
		{name: "split DS: too few values", setup: file("splitds.vcf", oneRec("1\t7\trs7\tA\tG,T\t.\t.\t.\tDS\t0,1\t1\t0,0")), args: imp("--split-multiallelic", "--field", "DS"),
			want: `IN:7: sample 2: DS "1" has 1 values for 2 ALT alleles`},
		{name: "header only", setup: file("nodata.vcf", []byte(impVCF(0))), args: imp(), want: "IN: no markers to import (0 records read"},
		{name: "second file with fewer samples", setup: file("two.vcf", []byte(strings.Replace(impVCF(2), "\tisle4-0003", "", 1))),
			args: func(in, out string) []string {
				return []string{"import", "-o", filepath.Join(out, "s.clinal"), goodVCF, in}
			},
			want: "IN:4: 2 samples, but " + goodVCF + " has 3"},
		{name: "standard input twice", setup: path("-"), args: func(_, out string) []string {
			return []string{"import", "-o", filepath.Join(out, "s.clinal"), "-", "-"}
		}, want: "standard input ('-') named more than once"},
		{name: "unknown --field", setup: path(goodVCF), args: imp("--field", "PL"), want: `unsupported --field "PL" (want GT or DS)`},
		{name: "unknown --haploid", setup: path(goodVCF), args: imp("--haploid", "half"), want: `unsupported haploid mode "half"`},
		{name: "output is a directory", setup: func(t *testing.T, out string) string {
			os.Mkdir(filepath.Join(out, "s.clinal"), 0o755)
			return goodVCF
		}, args: imp(), want: "output OUT/s.clinal: is a directory"},
		{name: "output directory missing", setup: path(goodVCF), args: func(in, out string) []string {
			return []string{"import", "-o", filepath.Join(out, "no", "s.clinal"), in}
		}, want: "output OUT/no/s.clinal: directory OUT/no does not exist"},

		// Dense matrices.
		{name: "dense: marker ID with a space", setup: file("sp.tsv", []byte("id\tm1\tm 2\nisle1-0001\t0\t1\n")), args: imp("--matrix"),
			want: `IN:1: column 3: marker ID: ID "m 2" contains a space`},
		{name: "dense: two files with samples as rows", setup: file("two.tsv", []byte("id\tm1\nisle1-0001\t1\n")),
			args: func(in, out string) []string {
				return []string{"import", "--matrix", "-o", filepath.Join(out, "s.clinal"), in, in}
			},
			want: "one file with samples as rows, or several with --markers-as-rows"},
		{name: "dense: value overflows float32", setup: file("big.tsv", []byte("id\tm1\nisle1-0001\t1e999\n")), args: imp("--matrix"),
			want: `IN:2: column 2: value "1e999" is not a finite number`},
		{name: "dense: named pipe carrying a short row", args: imp("--matrix", "--markers-as-rows"), fifo: []byte("m\tisle1-0001\tisle1-0002\nm1\t0\t1\nm2\t1\n"),
			want: "IN:3: 2 columns, expected 3"},

		// Stores.
		{name: "store is a directory", setup: path(dirIn), args: inspect, want: "open store IN: not a regular file (a directory)"},
		{name: "store is a named pipe", setup: func(t *testing.T, _ string) string {
			p := filepath.Join(t.TempDir(), "p.clinal")
			if err := syscall.Mkfifo(p, 0o644); err != nil {
				t.Fatal(err)
			}
			return p
		}, args: inspect, want: "open store IN: not a regular file (a named pipe)"},
		{name: "store is an empty file", setup: file("empty.clinal", nil), args: inspect, want: "open store IN: not a .clinal store (bad magic)"},
		{name: "store is a VCF", setup: path(goodVCF), args: pca("-k", "2"), want: "open store IN: not a .clinal store (bad magic)"},
		{name: "store cut in half", setup: file("half.clinal", good[:len(good)/2]), args: qcStore, want: "open store IN: incomplete store: no valid footer"},
		{name: "store header JSON damaged", setup: file("meta.clinal", metaFlip), args: inspect, want: "open store IN: header metadata: checksum mismatch"},
		{name: "store footer checksum damaged", setup: file("foot.clinal", footerCRC), args: inspect, want: "open store IN: footer: checksum mismatch"},
		{name: "store declares 2^40 samples", setup: file("huge.clinal", withMeta(func(m map[string]any) { m["samples"] = 1 << 40 })), args: inspect,
			want: "open store IN: header: corrupt store: 1099511627776 samples"},
		{name: "store declares chunks of 2^31 markers", setup: file("chunk.clinal", withMeta(func(m map[string]any) { m["chunk_markers"] = 1 << 31 })), args: inspect,
			want: "open store IN: header: corrupt store: chunk of 2147483648 markers"},
		{name: "store of an unknown version", setup: file("v2.clinal", withVersion(2)), args: qcStore, want: "open store IN: header: unsupported format version 2 (this clinal reads version 1)"},
		{name: "store of an unknown codec", setup: file("codec.clinal", withMeta(func(m map[string]any) { m["codec"] = "int4" })), args: inspect,
			want: `open store IN: header: unknown codec "int4"`},

		// Export.
		{name: "export: output is a directory", setup: func(t *testing.T, out string) string {
			os.Mkdir(filepath.Join(out, "e.vcf.gz"), 0o755)
			return storePath
		}, args: func(in, out string) []string { return []string{"export", "-o", filepath.Join(out, "e.vcf.gz"), in} }, want: "output OUT/e.vcf.gz: is a directory"},
		{name: "export: keep list is a directory", setup: path(dirIn), args: func(in, out string) []string {
			return []string{"export", "-o", filepath.Join(out, "e.vcf.gz"), "--keep-samples", in, storePath}
		}, want: "read sample list: IN: is a directory, not a file"},
		{name: "export: keep list names a stranger", setup: file("strangers.txt", []byte("isle4-0001\nisle9-0009\n")), args: func(in, out string) []string {
			return []string{"export", "-o", filepath.Join(out, "e.vcf.gz"), "--keep-samples", in, storePath}
		}, want: `IN:2: sample "isle9-0009" is not in`},
		{name: "export: no marker on the chromosomes", setup: path(storePath), args: func(in, out string) []string {
			return []string{"export", "-o", filepath.Join(out, "e.vcf.gz"), "--chromosomes", "7", in}
		}, want: `IN: no markers on chromosomes "7"`},

		// QC lists, regions and thresholds.
		{name: "qc: keep list is a directory", setup: path(dirIn), args: qcFlag("--keep-samples"), want: "--keep-samples: IN: is a directory, not a file"},
		{name: "qc: keep list through a named pipe, no store sample", args: qcFlag("--keep-samples"), fifo: []byte("isle7-0001\n"),
			want: "--keep-samples IN: none of its 1 IDs is a sample of the store"},
		{name: "qc: empty drop list", setup: file("empty.txt", nil), args: qcFlag("--drop-samples"), want: "--drop-samples IN: no sample IDs in the file"},
		{name: "qc: BED end before start", setup: file("back.bed", []byte("chr1\t10\t5\n")), args: qcFlag("--exclude-regions"), want: "IN:1: end 5 before start 10"},
		{name: "qc: BED line of two fields", setup: file("two.bed", []byte("# regions\nchr1\t10\n")), args: qcFlag("--exclude-regions"),
			want: "IN:2: want chrom, start and end, found 2 field(s)"},
		{name: "qc: BED line over 1 MiB", setup: file("long.bed", append([]byte("chr1\t0\t10\nchr1\t"), bytes.Repeat([]byte("9"), 1<<20+10)...)), args: qcFlag("--exclude-regions"),
			want: "IN:2: line longer than 1048576 bytes"},
		{name: "qc: BED with a broken gzip header", setup: file("bad.bed.gz", []byte{0x1f, 0x8b, 9, 0, 0, 0}), args: qcFlag("--exclude-regions"), want: "IN: bad gzip header"},
		{name: "qc: LD window of one marker", setup: path("1"), args: qcFlag("--ld-window"), want: `--ld-window "1": a window must hold at least 2 markers`},
		{name: "qc: HWE threshold above 1", setup: path("2"), args: qcFlag("--min-hwe-p"), want: "--min-hwe-p 2: must be between 0 and 1"},
		{name: "qc: zero threads", setup: path("0"), args: qcFlag("--threads"), want: "qc: --threads 0: must be at least 1"},
		{name: "qc: empty chromosome item", setup: path("1,,2"), args: qcFlag("--chromosomes"), want: `--chromosomes "1,,2": empty item`},
		{name: "qc: no -o", setup: path(storePath), args: func(in, _ string) []string { return []string{"qc", in} }, want: "qc: -o PREFIX is required"},

		// PCA arguments.
		{name: "pca: store is a directory", setup: path(dirIn), args: pca("-k", "2"), want: "open store IN: not a regular file (a directory)"},
		{name: "pca: bad --memory unit", setup: path(storePath), args: pca("--memory", "12XB"), want: `invalid value "12XB" for flag -memory: bad size unit`},
		{name: "pca: -k not a number", setup: path(storePath), args: pca("-k", "ten"), want: `invalid value "ten" for flag -k: want a number or auto`},
		{name: "pca: -k auto with the test off", setup: path(storePath), args: pca("-k", "auto", "--tw", "off"), want: "pca: -k auto needs --k-max >= 1, --tw not off"},
		{name: "pca: --qc run that does not exist", setup: path(storePath), args: func(in, out string) []string {
			return []string{"pca", in, "-k", "2", "-o", filepath.Join(out, "p"), "--qc", filepath.Join(out, "none")}
		}, want: "--qc OUT/none: open OUT/none.qc.json: no such file or directory"},
		{name: "pca: --qc with a filter flag", setup: path(storePath), args: func(in, out string) []string {
			return []string{"pca", in, "-k", "2", "-o", filepath.Join(out, "p"), "--qc", filepath.Join(out, "none"), "--min-maf", "0.1"}
		}, want: "it cannot be combined with --min-maf"},
		// An output directory that is not there is refused before any
		// pass (it used to fail at the first checkpoint, after a pass).
		{name: "pca: -o in a directory that does not exist", setup: path(storePath), args: func(in, out string) []string {
			return []string{"pca", in, "-k", "2", "-o", filepath.Join(out, "none", "p")}
		}, want: "pca: -o: output OUT/none/p: directory OUT/none does not exist"},
		{name: "qc: -o under a file", setup: func(t *testing.T, out string) string {
			if err := os.WriteFile(filepath.Join(out, "f"), nil, 0o644); err != nil {
				t.Fatal(err)
			}
			return storePath
		}, args: func(in, out string) []string { return []string{"qc", in, "-o", filepath.Join(out, "f", "q")} }, want: "qc: -o: output OUT/f/q: OUT/f is not a directory"},
		{name: "simulate: -o in a directory that does not exist", setup: path(storePath), args: func(_, out string) []string {
			return []string{"simulate", "-o", filepath.Join(out, "none", "x.clinal")}
		}, want: "simulate: -o: output OUT/none/x.clinal: directory OUT/none does not exist"},
		{name: "unknown command", setup: path(storePath), args: func(in, _ string) []string { return []string{"pac", in} }, want: `clinal: unknown command "pac"`},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			if tc.root && os.Geteuid() == 0 {
				t.Skip("running as root, who can read a mode-000 file: the permission check cannot fail here")
			}
			out := t.TempDir()
			var in string
			var fed chan error
			if tc.fifo != nil {
				in = filepath.Join(t.TempDir(), "pipe")
				if err := syscall.Mkfifo(in, 0o644); err != nil {
					t.Fatal(err)
				}
				fed = make(chan error, 1)
				go func() {
					f, err := os.OpenFile(in, os.O_WRONLY, 0)
					if err == nil {
						_, err = f.Write(tc.fifo)
						f.Close()
					}
					fed <- err
				}()
			} else {
				in = tc.setup(t, out)
			}
			before := bdEntries(t, out)
			var stdout, stderr bytes.Buffer
			code := run(context.Background(), &env{stdin: strings.NewReader(impVCF(3)), stdout: &stdout, stderr: &stderr}, tc.args(in, out))
			if fed != nil {
				// Release the writer if the command never opened the pipe.
				if r, err := os.OpenFile(in, os.O_RDONLY|syscall.O_NONBLOCK, 0); err == nil {
					r.Close()
				}
				<-fed
			}
			msg := stderr.String()
			t.Logf("exit %d: %s", code, strings.TrimSpace(msg))
			want := strings.NewReplacer("IN", in, "OUT", out).Replace(tc.want)
			if code != 2 {
				t.Errorf("exit %d, want 2 (stderr %q)", code, msg)
			}
			if strings.Count(msg, "\n") != 1 || !strings.Contains(msg, want) {
				t.Errorf("stderr %q, want one line containing %q", msg, want)
			}
			if stdout.Len() != 0 {
				t.Errorf("stdout %q", stdout.String())
			}
			if after := bdEntries(t, out); strings.Join(after, " ") != strings.Join(before, " ") {
				t.Errorf("output directory holds %q after the run, %q before", after, before)
			}
		})
	}
	if len(cases) < 30 {
		t.Fatalf("%d cases; issue 9 asks for at least 30", len(cases))
	}
}

// bdEntries lists every file and directory under dir, hidden ones
// included, as paths relative to dir.
func bdEntries(t *testing.T, dir string) []string {
	t.Helper()
	var out []string
	filepath.Walk(dir, func(p string, _ os.FileInfo, err error) error {
		if err == nil && p != dir {
			r, _ := filepath.Rel(dir, p)
			out = append(out, r)
		}
		return nil
	})
	sort.Strings(out)
	return out
}
