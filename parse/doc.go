// Package parse turns log text into records, and is where lines come from.
//
// Formats: each log format (JSON lines, logfmt, ...) implements Format and
// registers itself; Detect picks one from a stream's first lines. A parser
// fills a Record, whose buffer it reuses, so parsing allocates nothing per
// field. TimeFinder finds a stream's timestamp field and its format.
//
// Sources: a Source is a stream of Lines with a Status for the screen.
// FileSource reads files (plain, gzip, zstd, told by their magic bytes) once;
// Follower follows a live file across rotations; Replayer reads archives in
// the order of their first timestamps at a chosen pace. Every line a source
// reads is handed on, once: a line that is too long is handed on marked, to
// be counted as rejected, never dropped.
//
// Why the Follower is built on fsnotify rather than on the tail library
// (github.com/nxadm/tail, the maintained hpcloud/tail): on a rename or a
// delete that library reopens the name at once (tail.go, waitForChanges), so
// whatever the writer appends to the renamed file before it reopens its log
// is never read; its truncation check compares sizes only, so a file
// truncated and rewritten past the offset between two looks is read from
// the middle of a line; and its watcher calls os.Exit when a stat fails
// (watch/inotify.go, util.Fatal). Draining the old file until it is quiet,
// and queueing the files that take the name meanwhile, needs the open file
// and the name handled apart, which the library's API does not expose. So
// Follower watches the file's folder with fsnotify (or polls), and keeps
// the open file and the path's current file apart itself.
package parse
