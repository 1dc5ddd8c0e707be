package main

// robotCommand is "capcycle robot": the virtual robot on a pseudo-terminal.
func robotCommand() *command {
	return &command{
		name:    "robot",
		summary: "run the virtual robot: the circuit model behind a virtual board on a pseudo-terminal",
		run:     notBuilt("robot"),
	}
}
