package main

// portsCommand is "capcycle ports".
func portsCommand() *command {
	return &command{
		name:    "ports",
		summary: "list serial ports and the boards that speak capcycle's protocol",
		run:     notBuilt("ports"),
	}
}
