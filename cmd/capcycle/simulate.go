package main

// simulateCommand is "capcycle simulate".
func simulateCommand() *command {
	return &command{
		name:    "simulate",
		summary: "simulate a profile's circuit and write a capture file",
		run:     notBuilt("simulate"),
	}
}
