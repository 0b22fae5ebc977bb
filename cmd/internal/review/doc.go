// Package review is the local web page of 'recto review RUNDIR': staff
// look at a run's pages (image beside text), confirm or change each
// page's decision and accept or reject its corrections. Every change goes
// at once into the run's ledger (ledger.Record: who, when, old and new
// value, undoable), and the run's reports follow it (package run,
// reviewed.go).
//
// The server uses net/http only. Its contract, each point tested:
//
//   - It listens on 127.0.0.1 and a free port unless Options.Listen says
//     otherwise, and then the command warns.
//   - Every request needs the access token: given once in the URL
//     (?token=...), it is turned into a cookie (HttpOnly, SameSite=Strict)
//     and the URL without it. On loopback, a request naming another Host
//     is refused (DNS rebinding).
//   - Changes are POST only, with the page's CSRF token (form field csrf
//     or header X-CSRF-Token) and, when the browser sends one, an Origin
//     of this server. With Options.ReadOnly no change is accepted.
//   - Files are named by page key, never by path: a page's image must be
//     the source the ledger lists for it, inside the collection; an output
//     must be listed among the page's outputs, relative, inside the run
//     folder once symlinks are resolved. Anything else is refused.
//   - All text from pages (OCR text, names, notes, reasons, ground truth)
//     reaches the page through html/template or JSON read with
//     textContent; a Content-Security-Policy with a per-response nonce
//     allows only the page's own scripts and styles.
//
// Thumbnails and the page images shown (JPEG renditions of the source,
// in whatever format it is) are made once, on first request or by a
// background pass, and cached in RUNDIR/review/.
package review
