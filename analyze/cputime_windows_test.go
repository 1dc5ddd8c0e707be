package analyze

import (
	"time"

	"golang.org/x/sys/windows"
)

// cpuTime is the process's user plus kernel CPU time so far.
func cpuTime() time.Duration {
	var created, exited, kernel, user windows.Filetime
	windows.GetProcessTimes(windows.CurrentProcess(), &created, &exited, &kernel, &user)
	// A Filetime counts 100 ns intervals in two 32-bit halves.
	ticks := func(f windows.Filetime) int64 { return int64(f.HighDateTime)<<32 | int64(f.LowDateTime) }
	return time.Duration(ticks(kernel)+ticks(user)) * 100
}
