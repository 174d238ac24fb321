//go:build !unix

package cli

import "os"

// terminalColumns is the width of the terminal f, 0 when unknown (not
// read on this system; the caller assumes 80).
func terminalColumns(*os.File) int { return 0 }
