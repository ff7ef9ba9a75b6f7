package matrixio

import (
	"context"
	"os"
)

// InspectOptions configure InspectStore.
type InspectOptions struct {
	// Verify reads every chunk and checks its CRC32C and decoded size.
	Verify bool
	// Threads is the number of chunk readers for Verify (default 1).
	Threads int
	// FirstMarkers is how many leading markers to describe (default 5).
	FirstMarkers int
}

// StoreInfo describes a store: what `clinal inspect` prints. Samples and
// Markers are the integer dimensions at the top level of its JSON form.
type StoreInfo struct {
	Path            string            `json:"path"`
	Samples         int               `json:"samples"`
	Markers         int               `json:"markers"`
	Codec           Codec             `json:"codec"`
	Chunks          int               `json:"chunks"`
	ChunkMarkers    int               `json:"chunk_markers"`
	FileBytes       int64             `json:"file_bytes"`
	CompressedBytes int64             `json:"compressed_bytes"` // chunk payloads
	RawBytes        int64             `json:"raw_bytes"`        // chunk payloads decoded
	Source          string            `json:"source,omitempty"`
	Created         string            `json:"created,omitempty"`
	Params          map[string]string `json:"params,omitempty"`
	MissingRate     float64           `json:"missing_rate"`
	Chromosomes     []ChromCount      `json:"chromosomes"`
	FirstSamples    []string          `json:"first_samples"`
	FirstMarkers    []MarkerSummary   `json:"first_markers"`
	Verified        bool              `json:"verified"`
}

// ChromCount is the number of markers on one chromosome, in store order of
// first appearance.
type ChromCount struct {
	Chrom   string `json:"chrom"`
	Markers int    `json:"markers"`
}

// MarkerSummary is one marker's identity and stored counts. AltFreq (ALT
// allele frequency over called genotypes) is nil when no call was made;
// Mean is the mean of the non-missing values of a float store.
type MarkerSummary struct {
	Chrom    string   `json:"chrom"`
	Pos      int64    `json:"pos"`
	ID       string   `json:"id"`
	Ref      string   `json:"ref"`
	Alt      string   `json:"alt"`
	HomRef   uint32   `json:"hom_ref"`
	Het      uint32   `json:"het"`
	HomAlt   uint32   `json:"hom_alt"`
	Missing  uint32   `json:"missing"`
	AltFreq  *float64 `json:"alt_freq"`
	CallRate float64  `json:"call_rate"`
	Mean     *float64 `json:"mean,omitempty"`
}

// InspectStore opens a store and describes it; with Verify it also reads
// every chunk, and a checksum failure is returned as an error naming the
// chunk (ErrChecksum, bad input).
func InspectStore(ctx context.Context, path string, opt InspectOptions) (*StoreInfo, error) {
	st, err := Open(path)
	if err != nil {
		return nil, err
	}
	defer st.Close()
	if opt.FirstMarkers <= 0 {
		opt.FirstMarkers = 5
	}
	if opt.Threads < 1 {
		opt.Threads = 1
	}
	meta := st.Meta()
	info := &StoreInfo{Path: path, Samples: st.NumSamples(), Markers: st.NumMarkers(), Codec: st.Codec(),
		Chunks: st.NumChunks(), ChunkMarkers: st.ChunkMarkers(), CompressedBytes: st.CompressedBytes(),
		RawBytes: int64(st.NumMarkers()) * int64(st.RowBytes()),
		Source:   meta.Source, Created: meta.Created, Params: meta.Params}
	if fi, err := os.Stat(path); err == nil {
		info.FileBytes = fi.Size()
	}
	var miss uint64
	for _, m := range st.SampleMissing() {
		miss += uint64(m)
	}
	info.MissingRate = float64(miss) / (float64(info.Samples) * float64(info.Markers))
	idx := map[string]int{}
	for j := range st.NumMarkers() {
		m := st.Marker(j)
		k, ok := idx[m.Chrom]
		if !ok {
			k = len(info.Chromosomes)
			idx[m.Chrom] = k
			info.Chromosomes = append(info.Chromosomes, ChromCount{Chrom: m.Chrom})
		}
		info.Chromosomes[k].Markers++
	}
	info.FirstSamples = st.Samples()[:min(5, info.Samples)]
	counts := st.Counts()
	for j := 0; j < min(opt.FirstMarkers, info.Markers); j++ {
		c := counts[j]
		m := st.Marker(j)
		ms := MarkerSummary{Chrom: m.Chrom, Pos: m.Pos, ID: m.ID, Ref: m.Ref, Alt: m.Alt, HomRef: c.HomRef, Het: c.Het, HomAlt: c.HomAlt, Missing: c.Missing,
			CallRate: float64(c.Called()) / float64(info.Samples)}
		if c.Called() > 0 {
			f := c.AltFreq()
			ms.AltFreq = &f
			if info.Codec == CodecFloat32 {
				mean := c.Sum / float64(c.Called())
				ms.Mean = &mean
			}
		}
		info.FirstMarkers = append(info.FirstMarkers, ms)
	}
	if opt.Verify {
		if err := st.Verify(ctx, opt.Threads); err != nil {
			return nil, err
		}
		info.Verified = true
	}
	return info, nil
}
