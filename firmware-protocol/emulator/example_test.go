package emulator_test

import (
	"context"
	"fmt"
	"log"
	"os"

	"go.bug.st/serial"

	"capcycle/firmware-protocol/emulator"
	"capcycle/firmware-protocol/wire"
)

// Build the emulated board, run it on a waveform and read its frames through the
// serial stack, as a host program reads a USB board. (Needs avr-gcc and libsimavr, so
// there is no Output to check here; board_test.go runs the same steps.)
func Example() {
	ctx := context.Background()
	dir, err := os.MkdirTemp("", "board-")
	if err != nil {
		log.Fatal(err)
	}
	defer os.RemoveAll(dir)
	bin, err := emulator.Build(ctx, "", dir)
	if err != nil {
		log.Fatal(err) // errors.Is(err, emulator.ErrUnavailable) when tools are missing
	}
	// Wren's storage capacitor: 4.2 V, then a fire at 2 s drops it to 1.9 V.
	wave := dir + "/wren.txt"
	os.WriteFile(wave, []byte("time_s vcap_v\n0 4.2\n2 4.2\n2.02 1.9\n5 1.9\n"), 0o644)
	board, err := emulator.Start(ctx, bin, &emulator.Config{Waveform: wave, Div: []float64{0.333333}})
	if err != nil {
		log.Fatal(err)
	}
	defer board.Close()
	port, err := serial.Open(board.Path, &serial.Mode{BaudRate: 1000000})
	if err != nil {
		log.Fatal(err)
	}
	defer port.Close()
	dec := wire.NewDecoder(port)
	for i := 0; i < 10; i++ {
		f, err := dec.Next()
		if err != nil {
			log.Fatal(err)
		}
		fmt.Printf("%T\n", f)
	}
}
