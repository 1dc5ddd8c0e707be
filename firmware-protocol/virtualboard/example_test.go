//go:build unix

package virtualboard_test

import (
	"context"
	"fmt"
	"log"
	"math"
	"time"

	"capcycle/firmware-protocol/virtualboard"
)

// A board whose channel 0 sees a capacitor charging towards 3 V with a 20 s time
// constant, through a 1:3 divider, ten times faster than real time.
func Example() {
	src := virtualboard.SourceFunc(func(t float64, v []float64) bool {
		v[0] = 3 * (1 - math.Exp(-t/20))
		return t < 600
	})
	b, err := virtualboard.Open(&virtualboard.Config{Source: src, Div: []float64{1.0 / 3}, NoiseLSB: 0.7, Speed: 10})
	if err != nil {
		log.Fatal(err)
	}
	defer b.Close()
	fmt.Println("open", b.Path(), "with go.bug.st/serial")
	ctx, cancel := context.WithTimeout(context.Background(), time.Minute)
	defer cancel()
	if err := b.Run(ctx); err != nil {
		log.Print(err)
	}
}
