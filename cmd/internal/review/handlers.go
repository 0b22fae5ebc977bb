package review

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"net/http"
	"net/url"
	"os"
	"path"
	"path/filepath"
	"strconv"
	"strings"

	"recto/cmd/internal/run"
	"recto/cmd/internal/run/ledger"
	"recto/ocr"
	"recto/quality"
)

// Handler returns the server's handler: every route behind the token
// check, the Host check and the security headers.
func (s *Server) Handler() http.Handler {
	mux := http.NewServeMux()
	mux.HandleFunc("GET /{$}", s.overview)
	mux.HandleFunc("GET /page", s.pageView)
	mux.HandleFunc("GET /thumb", s.image("thumbs"))
	mux.HandleFunc("GET /image", s.image("pages"))
	mux.HandleFunc("GET /file", s.file)
	mux.HandleFunc("GET /truth", s.truthText)
	mux.HandleFunc("POST /decide", s.change(s.decide))
	mux.HandleFunc("POST /correction", s.change(s.judge))
	mux.HandleFunc("POST /undo", s.change(s.undo))
	mux.HandleFunc("POST /report", s.change(s.rebuild))
	return s.guard(mux)
}

// guard checks Host and token, turns a token in the URL into the cookie
// and sets the headers every response carries.
func (s *Server) guard(next http.Handler) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		h := w.Header()
		h.Set("X-Content-Type-Options", "nosniff")
		h.Set("X-Frame-Options", "DENY")
		h.Set("Referrer-Policy", "no-referrer")
		h.Set("Cache-Control", "no-store")
		if s.hosts != nil && !s.hosts[r.Host] {
			http.Error(w, "recto review: unknown Host "+strconv.Quote(r.Host)+": open the address recto review printed", http.StatusForbidden)
			return
		}
		if t := r.URL.Query().Get("token"); t != "" {
			if !ok(t, s.token) {
				http.Error(w, "recto review: wrong access token: open the address recto review printed", http.StatusUnauthorized)
				return
			}
			http.SetCookie(w, &http.Cookie{Name: cookieName, Value: s.token, Path: "/", HttpOnly: true, SameSite: http.SameSiteStrictMode})
			if r.Method == http.MethodGet || r.Method == http.MethodHead {
				q := r.URL.Query()
				q.Del("token")
				u := *r.URL
				u.RawQuery = q.Encode()
				http.Redirect(w, r, u.RequestURI(), http.StatusSeeOther)
				return
			}
		} else if c, err := r.Cookie(cookieName); err != nil || !ok(c.Value, s.token) {
			http.Error(w, "recto review: no access: open the address recto review printed (it carries the access token)", http.StatusUnauthorized)
			return
		}
		next.ServeHTTP(w, r)
	})
}

// change wraps a handler of a change: POST only (the mux sees to that),
// not read-only, the CSRF token and a same-origin Origin.
func (s *Server) change(fn func(w http.ResponseWriter, r *http.Request)) http.HandlerFunc {
	return func(w http.ResponseWriter, r *http.Request) {
		if s.o.ReadOnly {
			s.fail(w, r, http.StatusForbidden, "this review session is read-only (--read-only): no change is stored")
			return
		}
		if o := r.Header.Get("Origin"); o != "" && o != "http://"+r.Host {
			s.fail(w, r, http.StatusForbidden, "request from another site refused")
			return
		}
		if err := r.ParseForm(); err != nil {
			s.fail(w, r, http.StatusBadRequest, err.Error())
			return
		}
		t := r.Header.Get("X-CSRF-Token")
		if t == "" {
			t = r.PostForm.Get("csrf")
		}
		if !ok(t, s.csrf) {
			s.fail(w, r, http.StatusForbidden, "missing or wrong CSRF token: reload the page")
			return
		}
		fn(w, r)
	}
}

// wantsJSON: the page's script asks for JSON; a plain form post gets a
// redirect back to the page.
func wantsJSON(r *http.Request) bool {
	return strings.Contains(r.Header.Get("Accept"), "application/json")
}

func (s *Server) fail(w http.ResponseWriter, r *http.Request, code int, msg string) {
	if wantsJSON(r) {
		writeJSON(w, code, map[string]string{"error": msg})
		return
	}
	http.Error(w, "recto review: "+msg, code)
}

func writeJSON(w http.ResponseWriter, code int, v any) {
	w.Header().Set("Content-Type", "application/json; charset=utf-8")
	w.WriteHeader(code)
	_ = json.NewEncoder(w).Encode(v)
}

// rowOf returns the page named by the query or form value p.
func (s *Server) rowOf(w http.ResponseWriter, r *http.Request) (ledger.Page, bool) {
	rel := r.FormValue("p")
	row, found, err := s.page(r.Context(), rel)
	if err != nil {
		s.fail(w, r, http.StatusInternalServerError, err.Error())
		return ledger.Page{}, false
	}
	if !found {
		s.fail(w, r, http.StatusNotFound, "no page "+strconv.Quote(rel)+" in this run")
		return ledger.Page{}, false
	}
	return row, true
}

func (s *Server) image(kind string) http.HandlerFunc {
	return func(w http.ResponseWriter, r *http.Request) {
		row, found := s.rowOf(w, r)
		if !found {
			return
		}
		if row.State != ledger.StateDone {
			http.Error(w, "recto review: page failed: no image", http.StatusNotFound)
			return
		}
		src, err := s.source(row)
		if err != nil {
			refuse(w, err)
			return
		}
		ctype := "image/jpeg"
		var data []byte
		if kind == "pages" && src.Direct != "" {
			ctype = src.Direct // a PNG or JPEG the browser shows as it is
			data, err = readLimited(src.Path, 1<<30)
		} else {
			data, err = s.imgs.get(r.Context(), kind, src)
		}
		if err != nil {
			http.Error(w, "recto review: "+err.Error(), http.StatusInternalServerError)
			return
		}
		w.Header().Set("Content-Type", ctype)
		w.Header().Set("Cache-Control", "private, max-age=3600")
		_, _ = w.Write(data)
	}
}

func refuse(w http.ResponseWriter, err error) {
	if errors.Is(err, errRefused) {
		http.Error(w, "recto review: refused: "+err.Error(), http.StatusForbidden)
		return
	}
	http.Error(w, "recto review: "+err.Error(), http.StatusNotFound)
}

// file serves one output the ledger lists for the page, as plain text.
func (s *Server) file(w http.ResponseWriter, r *http.Request) {
	row, found := s.rowOf(w, r)
	if !found {
		return
	}
	p, err := s.output(row, r.FormValue("name"))
	if err != nil {
		refuse(w, err)
		return
	}
	data, err := readLimited(p, 64<<20)
	if err != nil {
		refuse(w, err)
		return
	}
	w.Header().Set("Content-Type", "text/plain; charset=utf-8")
	w.Header().Set("Content-Security-Policy", "default-src 'none'; sandbox")
	_, _ = w.Write(data)
}

// truthText answers the page's ground truth as JSON {"text": ...}.
func (s *Server) truthText(w http.ResponseWriter, r *http.Request) {
	row, found := s.rowOf(w, r)
	if !found {
		return
	}
	if !row.HasTruth || s.truth == "" {
		writeJSON(w, http.StatusNotFound, map[string]string{"error": "no ground truth for this page"})
		return
	}
	name, err := quality.FindTruth(filepath.Join(s.truth, filepath.FromSlash(strings.TrimSuffix(row.Rel, path.Ext(row.Rel)))))
	if err == nil && name == "" {
		err = errors.New("the ground-truth file is gone")
	}
	if err == nil {
		name, err = inside(s.truth, name)
	}
	var t *quality.Truth
	if err == nil {
		t, err = quality.ReadTruth(name)
	}
	if err != nil {
		writeJSON(w, http.StatusNotFound, map[string]string{"error": err.Error()})
		return
	}
	writeJSON(w, http.StatusOK, map[string]string{"text": t.Text})
}

// record reads the page's engine record (ocr/<page>.json).
func (s *Server) record(row ledger.Page) (*ocr.Record, error) {
	p, err := s.outputWith(row, "ocr", ocr.SuffixRecord)
	if err != nil || p == "" {
		return nil, err
	}
	data, err := readLimited(p, 256<<20)
	if err != nil {
		return nil, err
	}
	var rec ocr.Record
	if err := json.Unmarshal(data, &rec); err != nil {
		return nil, fmt.Errorf("%q: %w", p, err)
	}
	return &rec, nil
}

// changes reads the page's correction list.
func (s *Server) changes(row ledger.Page) ([]run.ChangeLine, error) {
	for _, o := range row.Outputs {
		if strings.HasSuffix(o, ".changes.jsonl") {
			if _, err := s.output(row, o); err != nil {
				return nil, err
			}
		}
	}
	return run.ChangesOf(s.dir, row)
}

// state is what a change answers: the page's state after it.
type state struct {
	Decision    string            `json:"decision"`
	Triage      string            `json:"triage"`
	Reviewed    bool              `json:"reviewed"`
	Who         string            `json:"who"`
	Note        string            `json:"note"`
	Last        int64             `json:"last"`
	Corrections map[string]string `json:"corrections"`
	History     []entryView       `json:"history"`
}

func (s *Server) answer(w http.ResponseWriter, r *http.Request, row ledger.Page) {
	rev, err := s.l.ReviewOf(r.Context(), row.Rel)
	if err != nil {
		s.fail(w, r, http.StatusInternalServerError, err.Error())
		return
	}
	if !wantsJSON(r) {
		back := r.PostForm.Get("back")
		if !strings.HasPrefix(back, "/page?") {
			back = "/page?p=" + url.QueryEscape(row.Rel)
		}
		http.Redirect(w, r, back, http.StatusSeeOther)
		return
	}
	st := state{Decision: row.Decision, Triage: row.Decision, Last: rev.Last, Corrections: rev.Corrections, Who: rev.Who, Note: rev.Note}
	if rev.Decision != "" {
		st.Decision, st.Reviewed = rev.Decision, true
	}
	if st.Corrections == nil {
		st.Corrections = map[string]string{}
	}
	if st.History, err = s.history(r.Context(), row.Rel); err != nil {
		s.fail(w, r, http.StatusInternalServerError, err.Error())
		return
	}
	writeJSON(w, http.StatusOK, st)
}

// seen parses the form's seen value: the page's Last as the caller saw it.
func seen(r *http.Request) int64 {
	v, err := strconv.ParseInt(r.PostForm.Get("seen"), 10, 64)
	if err != nil {
		return -1
	}
	return v
}

func (s *Server) stored(w http.ResponseWriter, r *http.Request, err error) bool {
	switch {
	case err == nil:
		return true
	case errors.Is(err, ledger.ErrConflict):
		s.fail(w, r, http.StatusConflict, strings.TrimPrefix(err.Error(), "ledger: "))
	case errors.Is(err, ledger.ErrNotReviewable):
		s.fail(w, r, http.StatusNotFound, "this page failed in the run: there is nothing to review")
	default:
		s.fail(w, r, http.StatusInternalServerError, err.Error())
	}
	return false
}

// Decisions a reviewer may choose.
var Decisions = []string{"accept", "correct", "rescan"}

func (s *Server) decide(w http.ResponseWriter, r *http.Request) {
	row, found := s.rowOf(w, r)
	if !found {
		return
	}
	d := r.PostForm.Get("decision")
	valid := false
	for _, v := range Decisions {
		valid = valid || v == d
	}
	if !valid {
		s.fail(w, r, http.StatusBadRequest, "decision "+strconv.Quote(d)+": one of accept, correct, rescan")
		return
	}
	note := strings.TrimSpace(r.PostForm.Get("note"))
	if len(note) > 2000 {
		note = note[:2000]
	}
	_, err := s.l.Record(r.Context(), ledger.ReviewEntry{Rel: row.Rel, Kind: ledger.KindDecision, New: d, Note: note, Who: s.user}, seen(r))
	if s.stored(w, r, err) {
		s.answer(w, r, row)
	}
}

func (s *Server) judge(w http.ResponseWriter, r *http.Request) {
	row, found := s.rowOf(w, r)
	if !found {
		return
	}
	v := r.PostForm.Get("value")
	if v != ledger.Accepted && v != ledger.Rejected {
		s.fail(w, r, http.StatusBadRequest, "value "+strconv.Quote(v)+": accepted or rejected")
		return
	}
	key := r.PostForm.Get("key")
	changes, err := s.changes(row)
	if err != nil {
		s.fail(w, r, http.StatusInternalServerError, err.Error())
		return
	}
	known := false
	for _, c := range changes {
		known = known || (c.Key() == key && c.Blocked == "")
	}
	if !known {
		s.fail(w, r, http.StatusNotFound, "no such correction on this page")
		return
	}
	_, err = s.l.Record(r.Context(), ledger.ReviewEntry{Rel: row.Rel, Kind: ledger.KindCorrection, Item: key, New: v, Who: s.user}, seen(r))
	if s.stored(w, r, err) {
		s.answer(w, r, row)
	}
}

func (s *Server) undo(w http.ResponseWriter, r *http.Request) {
	row, found := s.rowOf(w, r)
	if !found {
		return
	}
	_, _, err := s.l.Undo(r.Context(), row.Rel, s.user, seen(r))
	if s.stored(w, r, err) {
		s.answer(w, r, row)
	}
}

// rebuild rebuilds the run's reports (as recto report does).
func (s *Server) rebuild(w http.ResponseWriter, r *http.Request) {
	ctx, cancel := context.WithCancel(r.Context())
	defer cancel()
	p, err := run.Report(ctx, s.dir)
	if err != nil {
		s.fail(w, r, http.StatusInternalServerError, err.Error())
		return
	}
	if !wantsJSON(r) {
		http.Redirect(w, r, "/", http.StatusSeeOther)
		return
	}
	writeJSON(w, http.StatusOK, map[string]string{"report": p})
}

// render executes a template into a buffer first, so a failure never
// sends half a page, and sets the Content-Security-Policy with the
// response's nonce.
func (s *Server) render(w http.ResponseWriter, name string, data any, nonce string) {
	var buf bytes.Buffer
	if err := pages.ExecuteTemplate(&buf, name, data); err != nil {
		http.Error(w, "recto review: "+err.Error(), http.StatusInternalServerError)
		return
	}
	w.Header().Set("Content-Type", "text/html; charset=utf-8")
	w.Header().Set("Content-Security-Policy", "default-src 'none'; img-src 'self'; connect-src 'self'; form-action 'self'; "+
		"frame-ancestors 'none'; base-uri 'none'; style-src 'nonce-"+nonce+"'; script-src 'nonce-"+nonce+"'")
	_, _ = w.Write(buf.Bytes())
}

// fileExists reports whether name is a regular file.
func fileExists(name string) bool {
	fi, err := os.Stat(name)
	return err == nil && fi.Mode().IsRegular()
}
