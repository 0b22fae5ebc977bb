package review

import (
	"context"
	"crypto/rand"
	"crypto/subtle"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"net"
	"net/http"
	"net/url"
	"os"
	"os/user"
	"path"
	"path/filepath"
	"strings"
	"sync"
	"time"

	"recto/cmd/internal/run/ledger"
	"recto/ocr/par"
)

// Options are the settings of a review server. The zero value of every
// field but Dir means its default.
type Options struct {
	Dir      string // run folder: holds ledger.db (required)
	Listen   string // address to listen on; "" means 127.0.0.1 and a free port
	ReadOnly bool   // serve without accepting any change
	User     string // the name changes are stored under; "" means the operating-system user
	Token    string // access token; "" means a random one (32 bytes, hex)
	// Jobs bounds the background making of thumbnails; 0 means
	// GOMAXPROCS, a negative value makes none in the background (they
	// are made on request).
	Jobs int
}

// Server serves one run folder's review pages.
type Server struct {
	o     Options
	dir   string // absolute run folder, symlinks resolved
	root  string // absolute collection folder, symlinks resolved; "" when unknown
	truth string // absolute ground-truth folder, symlinks resolved; "" when none
	user  string
	l     *ledger.Ledger

	token string // access token
	csrf  string // the token every change must carry
	imgs  *imageCache

	mu      sync.Mutex
	version int64
	rows    []ledger.Page
	byRel   map[string]int

	hosts map[string]bool // Host headers accepted; nil accepts any (not on loopback)
}

// cookieName is the name of the access cookie.
const cookieName = "recto_review"

// ErrNoRun is wrapped by New's error when Dir holds no ledger.
var ErrNoRun = errors.New("not a run folder")

// New opens the run in o.Dir for review.
func New(ctx context.Context, o Options) (*Server, error) {
	if o.Dir == "" {
		return nil, errors.New("review: the run folder is required")
	}
	abs, err := filepath.Abs(o.Dir)
	if err != nil {
		return nil, err
	}
	if abs, err = filepath.EvalSymlinks(abs); err != nil {
		return nil, fmt.Errorf("review: %q: %w", o.Dir, errors.Unwrap(err))
	}
	lp := filepath.Join(abs, ledger.FileName)
	if _, err := os.Stat(lp); err != nil {
		if m, _ := filepath.Glob(filepath.Join(abs, "shards", "*", ledger.FileName)); len(m) > 0 {
			return nil, fmt.Errorf("review: %w: %q holds %d shard ledgers but no merged one: run 'recto merge %s' first", ErrNoRun, o.Dir, len(m), o.Dir)
		}
		return nil, fmt.Errorf("review: %w: %q has no %s (run 'recto run COLLECTION --out %s' first)", ErrNoRun, o.Dir, ledger.FileName, o.Dir)
	}
	l, err := ledger.OpenReview(lp, o.ReadOnly)
	if err != nil {
		return nil, fmt.Errorf("review: %w", err)
	}
	s := &Server{o: o, dir: abs, l: l, imgs: newImageCache(abs), user: o.User}
	for key, dst := range map[string]*string{"collection": &s.root, "truth": &s.truth} {
		v, err := l.Meta(ctx, key)
		if err != nil {
			l.Close()
			return nil, fmt.Errorf("review: %w", err)
		}
		if v != "" {
			if r, err := filepath.EvalSymlinks(v); err == nil {
				*dst = r
			}
		}
	}
	if s.user == "" {
		s.user = osUser()
	}
	if s.token = o.Token; s.token == "" {
		s.token = randomHex(32)
	}
	s.csrf = randomHex(32)
	if _, err := s.pages(ctx); err != nil {
		l.Close()
		return nil, err
	}
	return s, nil
}

// osUser is the name of the operating-system user running the server.
func osUser() string {
	if u, err := user.Current(); err == nil && u.Username != "" {
		return u.Username
	}
	for _, k := range []string{"USER", "LOGNAME", "USERNAME"} {
		if v := os.Getenv(k); v != "" {
			return v
		}
	}
	return "unknown"
}

func randomHex(n int) string {
	b := make([]byte, n)
	if _, err := rand.Read(b); err != nil {
		panic(err) // crypto/rand does not fail on supported systems
	}
	return hex.EncodeToString(b)
}

// Close closes the ledger.
func (s *Server) Close() error { return s.l.Close() }

// Token returns the access token.
func (s *Server) Token() string { return s.token }

// User returns the name changes are stored under.
func (s *Server) User() string { return s.user }

// Listen opens the listener: o.Listen, or 127.0.0.1 and a free port. It
// returns the address to open in a browser, token included, and whether
// the address is not a loopback one (the command then warns).
func (s *Server) Listen() (ln net.Listener, addr string, exposed bool, err error) {
	a := s.o.Listen
	if a == "" {
		a = "127.0.0.1:0"
	}
	ln, err = net.Listen("tcp", a)
	if err != nil {
		return nil, "", false, fmt.Errorf("review: listen on %q: %w", a, err)
	}
	tcp := ln.Addr().(*net.TCPAddr)
	host := tcp.IP.String()
	exposed = !tcp.IP.IsLoopback()
	if tcp.IP.IsUnspecified() {
		host = "127.0.0.1" // reachable from here; the warning says it is reachable from elsewhere too
	}
	hp := net.JoinHostPort(host, fmt.Sprint(tcp.Port))
	if exposed {
		s.hosts = nil
	} else {
		port := fmt.Sprint(tcp.Port)
		s.hosts = map[string]bool{hp: true, net.JoinHostPort("localhost", port): true, net.JoinHostPort("127.0.0.1", port): true, net.JoinHostPort("::1", port): true}
	}
	return ln, "http://" + hp + "/?token=" + url.QueryEscape(s.token), exposed, nil
}

// AllowHosts sets the Host headers accepted (for tests that serve the
// handler on a listener of their own); nil accepts any.
func (s *Server) AllowHosts(hosts ...string) {
	if hosts == nil {
		s.hosts = nil
		return
	}
	s.hosts = map[string]bool{}
	for _, h := range hosts {
		s.hosts[h] = true
	}
}

// Serve serves on ln until ctx is done, then shuts down (requests in
// flight get 5 s to finish). Thumbnails missing from the cache are made in
// the background meanwhile.
func (s *Server) Serve(ctx context.Context, ln net.Listener) error {
	srv := &http.Server{Handler: s.Handler(), ReadHeaderTimeout: 10 * time.Second}
	go s.Warm(ctx)
	errc := make(chan error, 1)
	go func() { errc <- srv.Serve(ln) }()
	select {
	case err := <-errc:
		return err
	case <-ctx.Done():
		sctx, cancel := context.WithTimeout(context.Background(), 5*time.Second)
		defer cancel()
		_ = srv.Shutdown(sctx)
		return nil
	}
}

// Warm makes the missing thumbnails of every done page, Options.Jobs at a
// time, then the missing page images of those whose source cannot be
// shown as it is, until ctx is done. It returns the number of images
// made.
func (s *Server) Warm(ctx context.Context) int {
	if s.o.Jobs < 0 {
		return 0
	}
	rows, err := s.pages(ctx)
	if err != nil {
		return 0
	}
	var srcs []pageSource
	for _, r := range rows {
		if r.State != ledger.StateDone {
			continue
		}
		if src, err := s.source(r); err == nil {
			srcs = append(srcs, src)
		}
	}
	var mu sync.Mutex
	made := 0
	for _, kind := range []string{"thumbs", "pages"} {
		var todo []pageSource
		for _, src := range srcs {
			if (kind == "thumbs" || src.Direct == "") && !s.imgs.has(kind, src) {
				todo = append(todo, src)
			}
		}
		_ = par.Each(ctx, len(todo), par.Workers(s.o.Jobs, len(todo)), func(_, i int) {
			if _, err := s.imgs.get(ctx, kind, todo[i]); err == nil {
				mu.Lock()
				made++
				mu.Unlock()
			}
		})
	}
	return made
}

// pages returns the ledger's rows, read again only when another process
// has committed to the ledger since the last read.
func (s *Server) pages(ctx context.Context) ([]ledger.Page, error) {
	v, err := s.l.DataVersion(ctx)
	if err != nil {
		return nil, fmt.Errorf("review: %w", err)
	}
	s.mu.Lock()
	defer s.mu.Unlock()
	if s.rows != nil && v == s.version {
		return s.rows, nil
	}
	rows, err := s.l.Pages(ctx)
	if err != nil {
		return nil, fmt.Errorf("review: %w", err)
	}
	kept := rows[:0]
	for _, r := range rows {
		if r.State != ledger.StateGone {
			kept = append(kept, r)
		}
	}
	s.rows, s.version = kept, v
	s.byRel = make(map[string]int, len(kept))
	for i, r := range kept {
		s.byRel[r.Rel] = i
	}
	return kept, nil
}

// page returns the row of rel.
func (s *Server) page(ctx context.Context, rel string) (ledger.Page, bool, error) {
	rows, err := s.pages(ctx)
	if err != nil {
		return ledger.Page{}, false, err
	}
	s.mu.Lock()
	i, ok := s.byRel[rel]
	s.mu.Unlock()
	if !ok {
		return ledger.Page{}, false, nil
	}
	return rows[i], true, nil
}

// errRefused is wrapped by the errors of files that are not served.
var errRefused = errors.New("not served")

// inside resolves name (absolute) and reports an error unless it lies in
// dir (absolute, resolved) once symlinks are followed.
func inside(dir, name string) (string, error) {
	if dir == "" {
		return "", fmt.Errorf("%w: no folder to serve from", errRefused)
	}
	real, err := filepath.EvalSymlinks(name)
	if err != nil {
		if errors.Is(err, fs.ErrNotExist) {
			return "", err
		}
		return "", fmt.Errorf("%w: %v", errRefused, err)
	}
	rel, err := filepath.Rel(dir, real)
	if err != nil || rel == ".." || strings.HasPrefix(rel, ".."+string(filepath.Separator)) || filepath.IsAbs(rel) {
		return "", fmt.Errorf("%w: %q is outside %q", errRefused, name, dir)
	}
	return real, nil
}

// output returns the resolved path of output name of page r: it must be
// one of r's outputs, relative and clean, and lie inside the run folder.
func (s *Server) output(r ledger.Page, name string) (string, error) {
	listed := false
	for _, o := range r.Outputs {
		if o == name {
			listed = true
		}
	}
	if !listed {
		return "", fmt.Errorf("%w: %q is not an output of page %q", errRefused, name, r.Rel)
	}
	if name == "" || path.IsAbs(name) || filepath.IsAbs(name) || strings.Contains(name, "\\") || path.Clean(name) != name ||
		name == ".." || strings.HasPrefix(name, "../") {
		return "", fmt.Errorf("%w: %q is not a relative path inside the run folder", errRefused, name)
	}
	return inside(s.dir, filepath.Join(s.dir, filepath.FromSlash(name)))
}

// outputWith returns the resolved path of r's output under sub ending in
// suffix, "" when r has none.
func (s *Server) outputWith(r ledger.Page, sub, suffix string) (string, error) {
	for _, o := range r.Outputs {
		if strings.HasPrefix(o, sub+"/") && strings.HasSuffix(o, suffix) {
			return s.output(r, o)
		}
	}
	return "", nil
}

// source returns what decodes r's image: the source the ledger lists,
// which must lie inside the collection.
func (s *Server) source(r ledger.Page) (pageSource, error) {
	if !filepath.IsAbs(r.Source) {
		return pageSource{}, fmt.Errorf("%w: source %q of %q is not an absolute path", errRefused, r.Source, r.Rel)
	}
	p, err := inside(s.root, r.Source)
	if err != nil {
		return pageSource{}, err
	}
	src := pageSource{Rel: r.Rel, SHA256: r.SHA256, Path: p}
	rec, err := s.record(r)
	if err == nil && rec != nil {
		src.FilePage = rec.FilePage
		if rec.FilePages <= 1 && rec.Width > 0 && rec.Width*rec.Height <= maxDirect {
			src.Direct = directType(p)
		}
	}
	return src, nil
}

// readLimited reads at most limit bytes of a file.
func readLimited(name string, limit int64) ([]byte, error) {
	f, err := os.Open(name)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return io.ReadAll(io.LimitReader(f, limit))
}

// ok compares a presented token with the expected one in constant time.
func ok(got, want string) bool {
	return got != "" && subtle.ConstantTimeCompare([]byte(got), []byte(want)) == 1
}
