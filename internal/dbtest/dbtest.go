// Package dbtest starts real database servers for tests: PostgreSQL and
// ClickHouse from their Debian packages, each on 127.0.0.1, on a free port,
// in a temporary directory, stopped and removed when the test ends. A test
// skips, saying why, when a server binary is missing.
package dbtest

import (
	"context"
	"fmt"
	"net"
	"os"
	"os/exec"
	"os/user"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"
)

// freePort asks the kernel for a free TCP port on 127.0.0.1.
func freePort(t testing.TB) int {
	t.Helper()
	l, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	defer l.Close()
	return l.Addr().(*net.TCPAddr).Port
}

// find returns the first path that exists, or "" (also trying PATH for
// bare names).
func find(paths ...string) string {
	for _, p := range paths {
		if !filepath.IsAbs(p) {
			if lp, err := exec.LookPath(p); err == nil {
				return lp
			}
			continue
		}
		if m, _ := filepath.Glob(p); len(m) > 0 {
			return m[len(m)-1]
		}
	}
	return ""
}

// asUser runs cmd as the named user when the test runs as root (PostgreSQL
// refuses to run as root), through setpriv, which execs in place so that
// the process started is the server itself.
func asUser(t testing.TB, name string, args ...string) *exec.Cmd {
	t.Helper()
	if os.Geteuid() != 0 {
		return exec.Command(args[0], args[1:]...)
	}
	u, err := user.Lookup(name)
	if err != nil {
		t.Skipf("running as root and there is no %s user to run the server as: %v", name, err)
	}
	sp := find("setpriv")
	if sp == "" {
		t.Skip("running as root and setpriv (util-linux) is missing to drop to the server's user")
	}
	return exec.Command(sp, append([]string{"--reuid=" + u.Uid, "--regid=" + u.Gid, "--init-groups", "--"}, args...)...)
}

// stopOnCleanup ends the server: SIGTERM (PostgreSQL: smart shutdown;
// ClickHouse: orderly), then SIGKILL if it has not ended within a minute.
func stopOnCleanup(t testing.TB, cmd *exec.Cmd, sig syscall.Signal) {
	done := make(chan struct{})
	go func() { cmd.Wait(); close(done) }()
	t.Cleanup(func() {
		cmd.Process.Signal(sig)
		select {
		case <-done:
		case <-time.After(time.Minute):
			cmd.Process.Kill()
			<-done
		}
	})
}

// waitFor polls ready until it succeeds or the deadline passes; the server
// log is shown on failure.
func waitFor(t testing.TB, what, logPath string, ready func(context.Context) error) {
	t.Helper()
	deadline := time.Now().Add(90 * time.Second)
	var err error
	for time.Now().Before(deadline) {
		ctx, cancel := context.WithTimeout(context.Background(), 5*time.Second)
		err = ready(ctx)
		cancel()
		if err == nil {
			return
		}
		time.Sleep(200 * time.Millisecond)
	}
	log, _ := os.ReadFile(logPath)
	t.Fatalf("%s did not start within 90s: %v\n%s", what, err, log)
}

// tempDir makes a directory the server's user can use.
func tempDir(t testing.TB, owner string) string {
	t.Helper()
	dir, err := os.MkdirTemp("", "bitsift-db-")
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { os.RemoveAll(dir) })
	if os.Geteuid() == 0 && owner != "" {
		if u, err := user.Lookup(owner); err == nil {
			uid, _ := strconv.Atoi(u.Uid)
			gid, _ := strconv.Atoi(u.Gid)
			os.Chown(dir, uid, gid)
		}
	}
	return dir
}

// Server is a running server.
type Server struct {
	DSN string
	PID int // the server process (PostgreSQL: the postmaster)
}

// CPU is the processor time the server has used, its own and that of its
// ended children (PostgreSQL's backends end with their connections), from
// /proc/PID/stat (utime, stime, cutime, cstime; proc(5)).
func (s *Server) CPU() (time.Duration, error) {
	b, err := os.ReadFile(fmt.Sprintf("/proc/%d/stat", s.PID))
	if err != nil {
		return 0, err
	}
	// Fields after the command name, which is in parentheses and may
	// hold spaces.
	rest := string(b[strings.LastIndexByte(string(b), ')')+2:])
	f := strings.Fields(rest)
	if len(f) < 15 {
		return 0, fmt.Errorf("short /proc stat: %q", b)
	}
	var ticks int64
	for _, i := range []int{11, 12, 13, 14} { // utime stime cutime cstime (fields 14–17)
		n, err := strconv.ParseInt(f[i], 10, 64)
		if err != nil {
			return 0, err
		}
		ticks += n
	}
	return time.Duration(ticks) * time.Second / clockTicks, nil
}

// clockTicks is sysconf(_SC_CLK_TCK), 100 on Linux.
const clockTicks = 100

// Postgres starts a PostgreSQL server and returns a DSN for its superuser
// "postgres" (trust authentication, on 127.0.0.1 only). ping checks a
// connection (the caller's client library; dbtest imports none).
func Postgres(t testing.TB, ping func(ctx context.Context, dsn string) error) *Server {
	t.Helper()
	initdb := find("/usr/lib/postgresql/*/bin/initdb", "initdb")
	server := find("/usr/lib/postgresql/*/bin/postgres", "postgres")
	if initdb == "" || server == "" {
		t.Skip("PostgreSQL is not installed (initdb and postgres; Debian: apt-get install postgresql)")
	}
	dir := tempDir(t, "postgres")
	data := filepath.Join(dir, "data")
	init := asUser(t, "postgres", initdb, "-D", data, "-U", "postgres", "-A", "trust", "-E", "UTF8", "--locale=C", "--no-sync")
	if out, err := init.CombinedOutput(); err != nil {
		t.Fatalf("initdb: %v\n%s", err, out)
	}
	port := freePort(t)
	logPath := filepath.Join(dir, "server.log")
	logf, err := os.Create(logPath)
	if err != nil {
		t.Fatal(err)
	}
	defer logf.Close()
	if os.Geteuid() == 0 {
		if u, err := user.Lookup("postgres"); err == nil {
			uid, _ := strconv.Atoi(u.Uid)
			gid, _ := strconv.Atoi(u.Gid)
			os.Chown(logPath, uid, gid)
		}
	}
	cmd := asUser(t, "postgres", server, "-D", data, "-p", strconv.Itoa(port), "-k", dir,
		"-c", "listen_addresses=127.0.0.1", "-c", "fsync=off", "-c", "synchronous_commit=off",
		"-c", "full_page_writes=off", "-c", "shared_buffers=64MB", "-c", "work_mem=64MB")
	cmd.Stdout, cmd.Stderr = logf, logf
	if err := cmd.Start(); err != nil {
		t.Fatalf("postgres: %v", err)
	}
	stopOnCleanup(t, cmd, syscall.SIGINT) // SIGINT: fast shutdown
	dsn := fmt.Sprintf("postgres://postgres@127.0.0.1:%d/postgres?sslmode=disable", port)
	waitFor(t, "postgres", logPath, func(ctx context.Context) error { return ping(ctx, dsn) })
	return &Server{DSN: dsn, PID: cmd.Process.Pid}
}

// ClickHouse starts a ClickHouse server and returns a DSN for its native
// port (user default, no password, 127.0.0.1 only).
func ClickHouse(t testing.TB, ping func(ctx context.Context, dsn string) error) *Server {
	t.Helper()
	server := find("clickhouse-server", "/usr/sbin/clickhouse-server", "/usr/bin/clickhouse-server")
	if server == "" {
		t.Skip("ClickHouse is not installed (clickhouse-server; Debian: apt-get install clickhouse-server)")
	}
	dir := tempDir(t, "")
	tcp, http := freePort(t), freePort(t)
	cfg := fmt.Sprintf(`<?xml version="1.0"?>
<yandex>
  <logger><level>warning</level><log>%[1]s/server.log</log><errorlog>%[1]s/err.log</errorlog><console>0</console></logger>
  <http_port>%[2]d</http_port>
  <tcp_port>%[3]d</tcp_port>
  <listen_host>127.0.0.1</listen_host>
  <path>%[1]s/data/</path>
  <tmp_path>%[1]s/tmp/</tmp_path>
  <user_files_path>%[1]s/user_files/</user_files_path>
  <format_schema_path>%[1]s/format_schemas/</format_schema_path>
  <users_config>%[1]s/users.xml</users_config>
  <default_profile>default</default_profile>
  <default_database>default</default_database>
  <mark_cache_size>268435456</mark_cache_size>
  <uncompressed_cache_size>268435456</uncompressed_cache_size>
  <timezone>UTC</timezone>
</yandex>
`, dir, http, tcp)
	users := `<?xml version="1.0"?>
<yandex>
  <profiles><default><max_threads>2</max_threads></default></profiles>
  <users><default><password></password><networks><ip>127.0.0.1</ip></networks><profile>default</profile><quota>default</quota></default></users>
  <quotas><default></default></quotas>
</yandex>
`
	if err := os.WriteFile(filepath.Join(dir, "config.xml"), []byte(cfg), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "users.xml"), []byte(users), 0o644); err != nil {
		t.Fatal(err)
	}
	logPath := filepath.Join(dir, "err.log")
	cmd := exec.Command(server, "--config-file="+filepath.Join(dir, "config.xml"))
	cmd.Dir = dir
	out, err := os.Create(filepath.Join(dir, "stdout.log"))
	if err != nil {
		t.Fatal(err)
	}
	defer out.Close()
	cmd.Stdout, cmd.Stderr = out, out
	if err := cmd.Start(); err != nil {
		t.Fatalf("clickhouse-server: %v", err)
	}
	stopOnCleanup(t, cmd, syscall.SIGTERM)
	dsn := fmt.Sprintf("clickhouse://default@127.0.0.1:%d/default", tcp)
	waitFor(t, "clickhouse-server", logPath, func(ctx context.Context) error { return ping(ctx, dsn) })
	return &Server{DSN: dsn, PID: cmd.Process.Pid}
}
