package wire

// ScanFrames is a bufio.SplitFunc that cuts a byte stream into frames. Each token runs
// from a start character ("!" or ">") to the "\n" inclusive; pass it to Parse. Bytes
// outside frames are skipped. A frame that is cut (a start character arrives before
// its "\n", or the stream ends) or runs past MaxLine bytes is returned as it stands,
// and Parse reports it as malformed; the scan then resumes at the next start
// character. ScanFrames never returns an error, so the scan never stops early.
func ScanFrames(data []byte, atEOF bool) (advance int, token []byte, err error) {
	skip, n, ok := split(data, atEOF)
	if ok {
		return skip + n, data[skip : skip+n], nil
	}
	return skip, nil, nil
}

// split finds the next frame in data: skip bytes of garbage come first, then, if ok,
// a token of n bytes. When !ok, more data is needed (at EOF, none is left).
func split(data []byte, atEOF bool) (skip, n int, ok bool) {
	i := 0
	for i < len(data) && data[i] != DeviceStart && data[i] != CommandStart {
		i++
	}
	if i == len(data) {
		return i, 0, false
	}
	limit := len(data)
	if limit > i+MaxLine {
		limit = i + MaxLine
	}
	for j := i + 1; j < limit; j++ {
		switch data[j] {
		case '\n':
			return i, j + 1 - i, true
		case DeviceStart, CommandStart:
			return i, j - i, true // cut: a new frame began
		}
	}
	if limit == i+MaxLine || atEOF {
		return i, limit - i, true // too long, or cut by the end of the stream
	}
	return i, 0, false
}
