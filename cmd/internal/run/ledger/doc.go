// Package ledger is the record of a batch run: an embedded SQLite database
// (pure Go, no server) with one row per page image giving its input path and
// SHA-256, its state, the outputs written, the metrics and decision, the
// error if it failed, and timings.
//
// The ledger makes a run resumable. A page is committed in its own
// transaction as soon as it is finished, in WAL mode with synchronous=FULL,
// so a crash or power cut loses at most the pages in flight. A page whose
// input hash and settings fingerprint match a committed "done" row is
// skipped by the next run; any other page is done again.
//
// Only one process may write a ledger at a time: Open takes an exclusive
// flock on the file named by the ledger path plus ".lock". The kernel
// releases it when the process dies, however it dies. All writes of one
// process go through one Writer goroutine.
package ledger
