package main

// reportCommand is "capcycle report".
func reportCommand() *command {
	return &command{
		name:    "report",
		summary: "write a self-contained HTML report of a capture",
		run:     notBuilt("report"),
	}
}
