// Package shard splits a collection's pages among the workers of a
// scaled-out run: shard i of n takes the pages whose relative path hashes to
// i modulo n. The split depends only on the path (FNV-1a, 64 bits), so every
// worker computes it alone, with no coordination, and a page always lands in
// the same shard.
package shard

import (
	"errors"
	"fmt"
	"hash/fnv"
	"strconv"
	"strings"
)

// Shard is one share of the pages: Index in [0, Count). The zero value
// (Count 0) means "not sharded": every page.
type Shard struct {
	Index int
	Count int
}

// ErrInvalid is wrapped by every error about a malformed shard setting.
var ErrInvalid = errors.New("shard: invalid")

// Sharded reports whether s selects a share rather than every page.
func (s Shard) Sharded() bool { return s.Count > 1 }

// String returns "i/n", or "" when not sharded.
func (s Shard) String() string {
	if s.Count == 0 {
		return ""
	}
	return fmt.Sprintf("%d/%d", s.Index, s.Count)
}

// Name returns a file-name form, "i-of-n".
func (s Shard) Name() string { return fmt.Sprintf("%d-of-%d", s.Index, s.Count) }

// Has reports whether the page with relative path rel (slash-separated)
// belongs to s.
func (s Shard) Has(rel string) bool {
	if s.Count <= 1 {
		return true
	}
	h := fnv.New64a()
	h.Write([]byte(rel))
	return h.Sum64()%uint64(s.Count) == uint64(s.Index)
}

// Parse reads "i/n" with 0 <= i < n.
func Parse(v string) (Shard, error) {
	a, b, ok := strings.Cut(v, "/")
	if !ok {
		return Shard{}, fmt.Errorf("%w shard %q: want i/n, e.g. 0/4", ErrInvalid, v)
	}
	i, err1 := strconv.Atoi(strings.TrimSpace(a))
	n, err2 := strconv.Atoi(strings.TrimSpace(b))
	if err1 != nil || err2 != nil {
		return Shard{}, fmt.Errorf("%w shard %q: want i/n with whole numbers, e.g. 0/4", ErrInvalid, v)
	}
	return check(i, n, fmt.Sprintf("shard %q", v))
}

func check(i, n int, what string) (Shard, error) {
	if n < 1 {
		return Shard{}, fmt.Errorf("%w %s: the count must be at least 1", ErrInvalid, what)
	}
	if i < 0 || i >= n {
		return Shard{}, fmt.Errorf("%w %s: the index must be in [0, %d)", ErrInvalid, what, n)
	}
	return Shard{Index: i, Count: n}, nil
}

// FromEnv finds the shard a batch scheduler assigned to this process.
// getenv is os.Getenv in production. count is the shard count the user
// gave (--shard-count), 0 when not given.
//
// Kubernetes Indexed Job: JOB_COMPLETION_INDEX is the index; Kubernetes
// sets no count variable, so the count comes from count or RECTO_SHARDS and
// must equal the Job's spec.completions.
//
// Slurm job array: the index is (SLURM_ARRAY_TASK_ID - SLURM_ARRAY_TASK_MIN)
// / SLURM_ARRAY_TASK_STEP (step 1 when unset) and the count is
// SLURM_ARRAY_TASK_COUNT (or count / RECTO_SHARDS when given). Arrays with
// irregular ids such as --array=1,4,9 cannot be mapped and give an error.
//
// It returns the zero Shard and no error when neither scheduler's variables
// are set.
func FromEnv(getenv func(string) string, count int) (Shard, error) {
	if count == 0 {
		if v := getenv("RECTO_SHARDS"); v != "" {
			n, err := strconv.Atoi(v)
			if err != nil {
				return Shard{}, fmt.Errorf("%w RECTO_SHARDS=%q: want a whole number", ErrInvalid, v)
			}
			count = n
		}
	}
	if v := getenv("JOB_COMPLETION_INDEX"); v != "" {
		i, err := strconv.Atoi(v)
		if err != nil {
			return Shard{}, fmt.Errorf("%w JOB_COMPLETION_INDEX=%q: want a whole number", ErrInvalid, v)
		}
		if count == 0 {
			return Shard{}, fmt.Errorf("%w: JOB_COMPLETION_INDEX is set but the shard count is not: pass --shard-count or set RECTO_SHARDS to the Job's completions", ErrInvalid)
		}
		return check(i, count, fmt.Sprintf("JOB_COMPLETION_INDEX=%d with count %d", i, count))
	}
	if v := getenv("SLURM_ARRAY_TASK_ID"); v != "" {
		id, err := strconv.Atoi(v)
		if err != nil {
			return Shard{}, fmt.Errorf("%w SLURM_ARRAY_TASK_ID=%q: want a whole number", ErrInvalid, v)
		}
		num := func(name string, def int) (int, error) {
			s := getenv(name)
			if s == "" {
				return def, nil
			}
			n, err := strconv.Atoi(s)
			if err != nil {
				return 0, fmt.Errorf("%w %s=%q: want a whole number", ErrInvalid, name, s)
			}
			return n, nil
		}
		lo, err := num("SLURM_ARRAY_TASK_MIN", 0)
		if err != nil {
			return Shard{}, err
		}
		step, err := num("SLURM_ARRAY_TASK_STEP", 1)
		if err != nil {
			return Shard{}, err
		}
		if count == 0 {
			if count, err = num("SLURM_ARRAY_TASK_COUNT", 0); err != nil {
				return Shard{}, err
			}
		}
		if count == 0 {
			return Shard{}, fmt.Errorf("%w: SLURM_ARRAY_TASK_ID is set but SLURM_ARRAY_TASK_COUNT is not: pass --shard-count", ErrInvalid)
		}
		if step < 1 || (id-lo)%step != 0 {
			return Shard{}, fmt.Errorf("%w: Slurm array task %d is not on a regular range (min %d, step %d): use --array=0-N or pass --shard i/n", ErrInvalid, id, lo, step)
		}
		i := (id - lo) / step
		return check(i, count, fmt.Sprintf("Slurm array task %d (min %d, step %d, count %d)", id, lo, step, count))
	}
	if count > 1 {
		return Shard{}, fmt.Errorf("%w: a shard count was given but no index: pass --shard i/n or run under a Kubernetes Indexed Job or a Slurm array", ErrInvalid)
	}
	return Shard{}, nil
}
