package synth_test

import (
	"context"
	"fmt"
	"log"

	"github.com/clinal/clinal/matrixio"
	"github.com/clinal/clinal/matrixio/synth"
)

// A tiny cohort of the invented Meridian Archipelago scenario: two samples
// per island, one from the mainland, one admixed, three markers.
func ExampleCohort_Generate() {
	cfg := synth.DefaultConfig()
	cfg.Samples, cfg.Markers = 12, 3
	c, err := synth.New(cfg)
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println(c.Samples())
	err = c.Generate(context.Background(), 1, func(m matrixio.Marker, g []byte) error {
		fmt.Println(m.Chrom, m.Pos, m.ID, m.Ref, m.Alt, g)
		return nil
	})
	if err != nil {
		log.Fatal(err)
	}
	// Output:
	// [isle1-0001 isle1-0002 isle2-0001 isle2-0002 isle3-0001 isle3-0002 isle4-0001 isle4-0002 isle5-0001 isle5-0002 mainland-0001 mixed-0001]
	// 1 623 mrk000001 G A [0 0 0 0 0 0 0 0 0 0 1 0]
	// 2 2014 mrk000002 C G [0 0 0 0 0 0 0 1 0 2 0 0]
	// 3 1047 mrk000003 A G [0 1 0 0 1 0 0 0 0 0 0 0]
}
