package main

// analyzeCommand is "capcycle analyze".
func analyzeCommand() *command {
	return &command{
		name:    "analyze",
		summary: "find every fire and reset in a capture and fit the circuit",
		run:     notBuilt("analyze"),
	}
}
