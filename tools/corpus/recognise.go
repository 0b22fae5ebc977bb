package main

import (
	"context"
	"errors"
)

// errNoEngine is returned by recogniseAll while the engine is unavailable.
var errNoEngine = errors.New("the recognition engine is not part of this build yet")

type cerSpread struct{}
type kindSummary struct{}

func recogniseAll(ctx context.Context, o buildOptions, plans []pagePlan, sum *summary) error {
	return errNoEngine
}
