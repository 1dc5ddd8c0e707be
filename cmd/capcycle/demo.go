package main

// demoCommand is "capcycle demo".
func demoCommand() *command {
	return &command{
		name:    "demo",
		summary: "record an accelerated windowsill day from the virtual robot, analyse it and write reports",
		run:     notBuilt("demo"),
	}
}
