package model

import "context"

// SnapshotContext is Snapshot with its analyses cancellable: the expected
// mutual information of the pairs, the surprising records and the
// determinant search look at ctx as they go and stop when it is done, so
// that a screen being closed never waits for a deep snapshot. A cancelled
// snapshot is incomplete and is not returned: the error is ctx's.
func (m *Model) SnapshotContext(ctx context.Context, opt SnapshotOptions) (*Snapshot, error) {
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	m.ctx = ctx
	defer func() { m.ctx = nil }()
	s := m.Snapshot(opt)
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	return s, nil
}

// cancelled says whether the snapshot being taken is no longer wanted.
func (m *Model) cancelled() bool { return m.ctx != nil && m.ctx.Err() != nil }

// cancelEvery is how many records a scan takes between two looks at the
// context (a look costs a lock; 4,096 records take well under a
// millisecond).
const cancelEvery = 4096
