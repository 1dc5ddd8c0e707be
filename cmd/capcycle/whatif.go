package main

// whatifCommand is "capcycle whatif".
func whatifCommand() *command {
	return &command{
		name:    "whatif",
		summary: "predict the effect of changing parts, or search for parts that reach a target",
		run:     notBuilt("whatif"),
	}
}
