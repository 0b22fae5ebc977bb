//go:build !unix

package ledger

import "os"

// lockFile does nothing on systems without flock: there, two runs on the
// same folder are not prevented (documented in docs/readme-run.md).
func lockFile(f *os.File) error { return nil }
