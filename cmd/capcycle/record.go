package main

// recordCommand is "capcycle record".
func recordCommand() *command {
	return &command{
		name:    "record",
		summary: "log a board's capacitor voltage to a capture file",
		run:     notBuilt("record"),
	}
}
