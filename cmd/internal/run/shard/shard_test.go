package shard

import (
	"errors"
	"fmt"
	"testing"
)

func TestParse(t *testing.T) {
	tests := []struct {
		in      string
		want    Shard
		wantErr bool
	}{
		{"0/1", Shard{0, 1}, false},
		{"2/3", Shard{2, 3}, false},
		{"3/3", Shard{}, true},
		{"-1/3", Shard{}, true},
		{"1/0", Shard{}, true},
		{"1", Shard{}, true},
		{"a/b", Shard{}, true},
	}
	for _, tt := range tests {
		t.Run(tt.in, func(t *testing.T) {
			got, err := Parse(tt.in)
			if (err != nil) != tt.wantErr || got != tt.want {
				t.Errorf("Parse(%q) = %v, %v; want %v, error %v", tt.in, got, err, tt.want, tt.wantErr)
			}
			if err != nil && !errors.Is(err, ErrInvalid) {
				t.Errorf("error %v does not wrap ErrInvalid", err)
			}
		})
	}
}

// Every page lands in exactly one shard, and the shares are roughly even.
func TestPartition(t *testing.T) {
	const n, pages = 3, 3000
	counts := make([]int, n)
	for p := range pages {
		rel := fmt.Sprintf("title-%d/page-%04d.tif", p%17, p)
		owners := 0
		for i := range n {
			if (Shard{i, n}).Has(rel) {
				owners++
				counts[i]++
			}
		}
		if owners != 1 {
			t.Fatalf("%q is in %d shards", rel, owners)
		}
	}
	for i, c := range counts {
		if c < pages/n*8/10 || c > pages/n*12/10 {
			t.Errorf("shard %d has %d of %d pages: uneven", i, c, pages)
		}
	}
}

func TestFromEnv(t *testing.T) {
	tests := []struct {
		name    string
		env     map[string]string
		count   int
		want    Shard
		wantErr bool
	}{
		{"none", nil, 0, Shard{}, false},
		// Kubernetes sets JOB_COMPLETION_INDEX in Indexed Jobs (kubernetes.io,
		// "Indexed Job for Parallel Processing with Static Work Assignment").
		{"k8s with flag", map[string]string{"JOB_COMPLETION_INDEX": "2"}, 4, Shard{2, 4}, false},
		{"k8s with env", map[string]string{"JOB_COMPLETION_INDEX": "0", "RECTO_SHARDS": "5"}, 0, Shard{0, 5}, false},
		{"k8s without count", map[string]string{"JOB_COMPLETION_INDEX": "0"}, 0, Shard{}, true},
		{"k8s index too big", map[string]string{"JOB_COMPLETION_INDEX": "4"}, 4, Shard{}, true},
		// Slurm sets SLURM_ARRAY_TASK_ID/_MIN/_COUNT/_STEP for arrays
		// (SchedMD, "Job Array Support", slurm.schedmd.com/job_array.html).
		{"slurm 1-8", map[string]string{"SLURM_ARRAY_TASK_ID": "3", "SLURM_ARRAY_TASK_MIN": "1", "SLURM_ARRAY_TASK_COUNT": "8"}, 0, Shard{2, 8}, false},
		{"slurm 1-7:2", map[string]string{"SLURM_ARRAY_TASK_ID": "5", "SLURM_ARRAY_TASK_MIN": "1", "SLURM_ARRAY_TASK_STEP": "2", "SLURM_ARRAY_TASK_COUNT": "4"}, 0, Shard{2, 4}, false},
		{"slurm irregular", map[string]string{"SLURM_ARRAY_TASK_ID": "9", "SLURM_ARRAY_TASK_MIN": "1", "SLURM_ARRAY_TASK_COUNT": "3"}, 0, Shard{}, true},
		{"count without index", nil, 3, Shard{}, true},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got, err := FromEnv(func(k string) string { return tt.env[k] }, tt.count)
			if (err != nil) != tt.wantErr || got != tt.want {
				t.Errorf("FromEnv() = %v, %v; want %v, error %v", got, err, tt.want, tt.wantErr)
			}
		})
	}
}
