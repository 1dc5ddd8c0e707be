package main

// profileCommand is "capcycle profile".
func profileCommand() *command {
	return &command{
		name:    "profile",
		summary: "write a commented bench profile template, or check one",
		run:     notBuilt("profile"),
	}
}
