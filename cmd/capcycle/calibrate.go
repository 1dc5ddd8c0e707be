package main

// calibrateCommand is "capcycle calibrate".
func calibrateCommand() *command {
	return &command{
		name:    "calibrate",
		summary: "calibrate a board's channels against a multimeter reading",
		run:     notBuilt("calibrate"),
	}
}
