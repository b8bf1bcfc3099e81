package ui

import (
	"context"
	"errors"

	"bitsift/ingest"
	"bitsift/model"
)

// Lines: the fixture keeps no window to look records up in.
func (s *staticFeed) Lines(ctx context.Context, conds []model.Cond, limit int) ([]ingest.LineBehind, int, error) {
	return nil, 0, errors.New("no window in this test")
}

// SaveBaseline: the fixture has no window to profile.
func (s *staticFeed) SaveBaseline(ctx context.Context, path string) error {
	return errors.New("no window in this test")
}

// SetWhere: the fixture takes no records.
func (s *staticFeed) SetWhere(ctx context.Context, conds []model.Cond, text []string) error {
	return nil
}
