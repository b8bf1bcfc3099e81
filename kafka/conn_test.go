package kafka

import (
	"context"
	"crypto/ecdsa"
	"crypto/elliptic"
	"crypto/rand"
	"crypto/tls"
	"crypto/x509"
	"crypto/x509/pkix"
	"encoding/pem"
	"math/big"
	"net"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/twmb/franz-go/pkg/kfake"
	"github.com/twmb/franz-go/pkg/kgo"

	"bitsift/internal/kafkafake"
)

// selfSigned makes a CA-less certificate for 127.0.0.1 and writes it (PEM)
// to dir/ca.pem.
func selfSigned(t *testing.T, dir string) (tls.Certificate, string) {
	t.Helper()
	key, err := ecdsa.GenerateKey(elliptic.P256(), rand.Reader)
	if err != nil {
		t.Fatal(err)
	}
	tmpl := &x509.Certificate{SerialNumber: big.NewInt(1), Subject: pkix.Name{CommonName: "quay broker"},
		NotBefore: time.Now().Add(-time.Hour), NotAfter: time.Now().Add(time.Hour),
		IPAddresses: []net.IP{net.ParseIP("127.0.0.1")}, IsCA: true, BasicConstraintsValid: true,
		KeyUsage: x509.KeyUsageDigitalSignature | x509.KeyUsageCertSign, ExtKeyUsage: []x509.ExtKeyUsage{x509.ExtKeyUsageServerAuth}}
	der, err := x509.CreateCertificate(rand.Reader, tmpl, tmpl, &key.PublicKey, key)
	if err != nil {
		t.Fatal(err)
	}
	ca := filepath.Join(dir, "ca.pem")
	if err := os.WriteFile(ca, pem.EncodeToMemory(&pem.Block{Type: "CERTIFICATE", Bytes: der}), 0o600); err != nil {
		t.Fatal(err)
	}
	return tls.Certificate{Certificate: [][]byte{der}, PrivateKey: key}, ca
}

// TestTLSAndSASL: over TLS with a CA of its own and SCRAM-SHA-256, the
// source reads the topic with credentials from a file or from the
// environment; a wrong password fails without the password in the error.
func TestTLSAndSASL(t *testing.T) {
	if os.Getenv("KAFKA_BROKERS") != "" {
		t.Skip("KAFKA_BROKERS: this test needs a cluster of its own with TLS and SASL (kfake)")
	}
	dir := t.TempDir()
	cert, ca := selfSigned(t, dir)
	c, err := kafkafake.NewWith(1, []string{"manifests"}, kfake.TLS(&tls.Config{Certificates: []tls.Certificate{cert}}),
		kfake.EnableSASL(), kfake.Superuser("SCRAM-SHA-256", "harbormaster", "tide-table-42"))
	if err != nil {
		t.Fatal(err)
	}
	defer c.Close()
	good := Conn{Brokers: c.Brokers, TLS: true, CAFile: ca, SASL: "scram-sha-256", CredFile: filepath.Join(dir, "cred")}
	os.WriteFile(good.CredFile, []byte("user=harbormaster\npassword=tide-table-42\n"), 0o600)
	opts, err := good.Opts()
	if err != nil {
		t.Fatal(err)
	}
	cl, err := kgo.NewClient(opts...)
	if err != nil {
		t.Fatal(err)
	}
	defer cl.Close()
	if err := kafkafake.Produce(context.Background(), cl, "manifests", -1, []byte("vessel=Aurora berth=3"), []byte("vessel=Brine berth=4")); err != nil {
		t.Fatal(err)
	}
	read := func(conn Conn) (int, error) {
		src, err := Open(context.Background(), Options{Conn: conn, Topic: "manifests", Start: Start{Kind: "oldest"}, Bounded: true, Timeout: 5 * time.Second})
		if err != nil {
			return 0, err
		}
		defer src.Close()
		return len(readAll(t, src)), nil
	}
	if n, err := read(good); err != nil || n != 2 {
		t.Fatalf("with the file's credentials: %d records, %v", n, err)
	}
	env := good
	env.CredFile = ""
	env.Getenv = envOf(map[string]string{EnvUser: "harbormaster", EnvPassword: "tide-table-42"})
	if n, err := read(env); err != nil || n != 2 {
		t.Fatalf("with the environment's credentials: %d records, %v", n, err)
	}
	bad := env
	bad.Getenv = envOf(map[string]string{EnvUser: "harbormaster", EnvPassword: "low-water-7"})
	if _, err := read(bad); err == nil || strings.Contains(err.Error(), "low-water-7") {
		t.Fatalf("a wrong password: %v", err)
	}
	noCA := good
	noCA.CAFile = ""
	if _, err := read(noCA); err == nil {
		t.Fatal("a certificate no CA vouches for was accepted")
	}
}

func envOf(m map[string]string) func(string) string { return func(k string) string { return m[k] } }
