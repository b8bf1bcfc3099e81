// Package kafka reads log lines from a Kafka topic: a parse.Source over a
// topic's partitions for watch, replay and report, and the worker that
// profiles a topic in a consumer group (worker.go) with the offset chains
// that merge its profiles (chain.go). The client is franz-go (pkg/kgo,
// pkg/kadm); nothing here speaks the protocol by hand.
package kafka

import (
	"bufio"
	"crypto/tls"
	"crypto/x509"
	"errors"
	"fmt"
	"os"
	"strings"

	"github.com/twmb/franz-go/pkg/kgo"
	"github.com/twmb/franz-go/pkg/sasl/plain"
	"github.com/twmb/franz-go/pkg/sasl/scram"
)

// Environment variables that carry SASL credentials (never the command
// line, where every user of the machine can read them in the process list).
const (
	EnvUser     = "BITSIFT_KAFKA_USER"
	EnvPassword = "BITSIFT_KAFKA_PASSWORD"
)

// Conn says how to reach a cluster.
type Conn struct {
	Brokers []string // host:port seeds
	// TLS turns on TLS; CAFile adds a CA bundle (PEM) to the system's,
	// CertFile and KeyFile present a client certificate, ServerName
	// overrides the name checked in the brokers' certificates.
	TLS                       bool
	CAFile, CertFile, KeyFile string
	ServerName                string
	// SASL is "", "plain", "scram-sha-256" or "scram-sha-512". The user
	// and password come from CredFile (lines user=... and password=...)
	// or else from the environment (EnvUser, EnvPassword).
	SASL     string
	CredFile string
	// Getenv reads the environment (nil: os.Getenv).
	Getenv func(string) string
	// ClientID names the client to the brokers (default "bitsift").
	ClientID string
}

// SASLMechanisms are the values Conn.SASL takes.
var SASLMechanisms = []string{"plain", "scram-sha-256", "scram-sha-512"}

// Opts turns c into client options.
func (c Conn) Opts() ([]kgo.Opt, error) {
	var brokers []string
	for _, b := range c.Brokers {
		for _, s := range strings.Split(b, ",") {
			if s = strings.TrimSpace(s); s != "" {
				brokers = append(brokers, s)
			}
		}
	}
	if len(brokers) == 0 {
		return nil, errors.New("kafka: give --brokers host:port[,host:port...]")
	}
	id := c.ClientID
	if id == "" {
		id = "bitsift"
	}
	opts := []kgo.Opt{kgo.SeedBrokers(brokers...), kgo.ClientID(id)}
	if c.TLS || c.CAFile != "" || c.CertFile != "" || c.ServerName != "" {
		cfg, err := c.tlsConfig()
		if err != nil {
			return nil, err
		}
		opts = append(opts, kgo.DialTLSConfig(cfg))
	}
	if c.SASL != "" {
		user, pass, err := c.credentials()
		if err != nil {
			return nil, err
		}
		switch strings.ToLower(c.SASL) {
		case "plain":
			opts = append(opts, kgo.SASL(plain.Auth{User: user, Pass: pass}.AsMechanism()))
		case "scram-sha-256":
			opts = append(opts, kgo.SASL(scram.Auth{User: user, Pass: pass}.AsSha256Mechanism()))
		case "scram-sha-512":
			opts = append(opts, kgo.SASL(scram.Auth{User: user, Pass: pass}.AsSha512Mechanism()))
		default:
			return nil, fmt.Errorf("kafka: --sasl %q: use one of %s", c.SASL, strings.Join(SASLMechanisms, ", "))
		}
	}
	return opts, nil
}

func (c Conn) tlsConfig() (*tls.Config, error) {
	cfg := &tls.Config{MinVersion: tls.VersionTLS12, ServerName: c.ServerName}
	if c.CAFile != "" {
		pem, err := os.ReadFile(c.CAFile)
		if err != nil {
			return nil, fmt.Errorf("kafka: --tls-ca: %w", err)
		}
		pool, err := x509.SystemCertPool()
		if err != nil || pool == nil {
			pool = x509.NewCertPool()
		}
		if !pool.AppendCertsFromPEM(pem) {
			return nil, fmt.Errorf("kafka: --tls-ca %s: no PEM certificate in it", c.CAFile)
		}
		cfg.RootCAs = pool
	}
	if (c.CertFile == "") != (c.KeyFile == "") {
		return nil, errors.New("kafka: give --tls-cert and --tls-key together")
	}
	if c.CertFile != "" {
		cert, err := tls.LoadX509KeyPair(c.CertFile, c.KeyFile)
		if err != nil {
			return nil, fmt.Errorf("kafka: client certificate: %w", err)
		}
		cfg.Certificates = []tls.Certificate{cert}
	}
	return cfg, nil
}

// credentials reads the SASL user and password from CredFile or the
// environment. Errors never carry the password.
func (c Conn) credentials() (user, pass string, err error) {
	if c.CredFile != "" {
		f, err := os.Open(c.CredFile)
		if err != nil {
			return "", "", fmt.Errorf("kafka: --sasl-file: %w", err)
		}
		defer f.Close()
		sc := bufio.NewScanner(f)
		for sc.Scan() {
			k, v, ok := strings.Cut(strings.TrimSpace(sc.Text()), "=")
			if !ok {
				continue
			}
			switch strings.TrimSpace(k) {
			case "user", "username":
				user = strings.TrimSpace(v)
			case "password":
				pass = strings.TrimRight(v, "\r")
			}
		}
		if err := sc.Err(); err != nil {
			return "", "", fmt.Errorf("kafka: --sasl-file: %w", err)
		}
		if user == "" || pass == "" {
			return "", "", fmt.Errorf("kafka: --sasl-file %s: needs a line user=NAME and a line password=SECRET", c.CredFile)
		}
		return user, pass, nil
	}
	get := c.Getenv
	if get == nil {
		get = os.Getenv
	}
	user, pass = get(EnvUser), get(EnvPassword)
	if user == "" || pass == "" {
		return "", "", fmt.Errorf("kafka: --sasl %s needs credentials: set %s and %s, or give --sasl-file FILE", c.SASL, EnvUser, EnvPassword)
	}
	return user, pass, nil
}
