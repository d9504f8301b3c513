package api

import (
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
	"testing"
	"time"

	"google.golang.org/grpc"
	"google.golang.org/grpc/credentials"
	"google.golang.org/grpc/credentials/insecure"

	"termgrove/model"
	pb "termgrove/proto/termgrove/v1"
)

// testCA is a certificate authority made in the test.
type testCA struct {
	cert *x509.Certificate
	key  *ecdsa.PrivateKey
	pem  []byte
}

var serial int64

func newCA(t *testing.T, name string) *testCA {
	t.Helper()
	key, err := ecdsa.GenerateKey(elliptic.P256(), rand.Reader)
	if err != nil {
		t.Fatal(err)
	}
	serial++
	tmpl := &x509.Certificate{
		SerialNumber:          big.NewInt(serial),
		Subject:               pkix.Name{CommonName: name},
		NotBefore:             time.Now().Add(-time.Hour),
		NotAfter:              time.Now().Add(time.Hour),
		IsCA:                  true,
		KeyUsage:              x509.KeyUsageCertSign | x509.KeyUsageDigitalSignature,
		BasicConstraintsValid: true,
	}
	der, err := x509.CreateCertificate(rand.Reader, tmpl, tmpl, &key.PublicKey, key)
	if err != nil {
		t.Fatal(err)
	}
	cert, _ := x509.ParseCertificate(der)
	return &testCA{cert: cert, key: key, pem: pem.EncodeToMemory(&pem.Block{Type: "CERTIFICATE", Bytes: der})}
}

// issue returns PEM certificate and key of a leaf for 127.0.0.1 and
// localhost, usable by a server or a client.
func (ca *testCA) issue(t *testing.T, name string) (certPEM, keyPEM []byte) {
	t.Helper()
	key, err := ecdsa.GenerateKey(elliptic.P256(), rand.Reader)
	if err != nil {
		t.Fatal(err)
	}
	serial++
	tmpl := &x509.Certificate{
		SerialNumber: big.NewInt(serial),
		Subject:      pkix.Name{CommonName: name},
		NotBefore:    time.Now().Add(-time.Hour),
		NotAfter:     time.Now().Add(time.Hour),
		KeyUsage:     x509.KeyUsageDigitalSignature,
		ExtKeyUsage:  []x509.ExtKeyUsage{x509.ExtKeyUsageServerAuth, x509.ExtKeyUsageClientAuth},
		IPAddresses:  []net.IP{net.ParseIP("127.0.0.1")},
		DNSNames:     []string{"localhost"},
	}
	der, err := x509.CreateCertificate(rand.Reader, tmpl, ca.cert, &key.PublicKey, ca.key)
	if err != nil {
		t.Fatal(err)
	}
	kder, err := x509.MarshalECPrivateKey(key)
	if err != nil {
		t.Fatal(err)
	}
	return pem.EncodeToMemory(&pem.Block{Type: "CERTIFICATE", Bytes: der}),
		pem.EncodeToMemory(&pem.Block{Type: "EC PRIVATE KEY", Bytes: kder})
}

func writeFile(t *testing.T, dir, name string, b []byte) string {
	p := filepath.Join(dir, name)
	if err := os.WriteFile(p, b, 0o600); err != nil {
		t.Fatal(err)
	}
	return p
}

// tlsCall dials addr with tc (nil: plaintext) and makes one call.
func tlsCall(t *testing.T, addr string, tc *tls.Config) error {
	creds := insecure.NewCredentials()
	if tc != nil {
		creds = credentials.NewTLS(tc)
	}
	conn := dial(t, addr, grpc.WithTransportCredentials(creds))
	defer conn.Close()
	_, err := pb.NewAnnotationServiceClient(conn).GetModel(ctxT(t), &pb.GetModelRequest{})
	return err
}

func TestTLS(t *testing.T) {
	dir := t.TempDir()
	ca := newCA(t, "test CA")
	cert, key := ca.issue(t, "server")
	ts := startServer(t, Config{TLSCert: writeFile(t, dir, "s.crt", cert), TLSKey: writeFile(t, dir, "s.key", key)}, nil)
	addr := ts.s.Addr().String()
	pool := x509.NewCertPool()
	pool.AppendCertsFromPEM(ca.pem)
	if err := tlsCall(t, addr, &tls.Config{RootCAs: pool}); err != nil {
		t.Fatalf("TLS client: %v", err)
	}
	if err := tlsCall(t, addr, nil); err == nil {
		t.Fatal("plaintext client got through a TLS server")
	}
	other := x509.NewCertPool()
	other.AppendCertsFromPEM(newCA(t, "other CA").pem)
	if err := tlsCall(t, addr, &tls.Config{RootCAs: other}); err == nil {
		t.Fatal("client trusting another CA accepted the server")
	}
	// The certificate is re-read on ReloadTLS.
	cert2, key2 := ca.issue(t, "server-2")
	writeFile(t, dir, "s.crt", cert2)
	writeFile(t, dir, "s.key", key2)
	if err := ts.s.ReloadTLS(); err != nil {
		t.Fatal(err)
	}
	var seen string
	tc := &tls.Config{RootCAs: pool, VerifyConnection: func(cs tls.ConnectionState) error {
		seen = cs.PeerCertificates[0].Subject.CommonName
		return nil
	}}
	if err := tlsCall(t, addr, tc); err != nil || seen != "server-2" {
		t.Fatalf("after ReloadTLS: %v, server presented %q", err, seen)
	}
}

func TestMutualTLS(t *testing.T) {
	dir := t.TempDir()
	ca := newCA(t, "test CA")
	cert, key := ca.issue(t, "server")
	ts := startServer(t, Config{
		TLSCert:     writeFile(t, dir, "s.crt", cert),
		TLSKey:      writeFile(t, dir, "s.key", key),
		TLSClientCA: writeFile(t, dir, "ca.crt", ca.pem),
	}, nil)
	addr := ts.s.Addr().String()
	pool := x509.NewCertPool()
	pool.AppendCertsFromPEM(ca.pem)
	ccert, ckey := ca.issue(t, "client")
	good, err := tls.X509KeyPair(ccert, ckey)
	if err != nil {
		t.Fatal(err)
	}
	if err := tlsCall(t, addr, &tls.Config{RootCAs: pool, Certificates: []tls.Certificate{good}}); err != nil {
		t.Fatalf("client with a certificate of the CA: %v", err)
	}
	if err := tlsCall(t, addr, &tls.Config{RootCAs: pool}); err == nil {
		t.Fatal("client without a certificate got through mutual TLS")
	}
	rogue := newCA(t, "rogue CA")
	rcert, rkey := rogue.issue(t, "client")
	bad, _ := tls.X509KeyPair(rcert, rkey)
	if err := tlsCall(t, addr, &tls.Config{RootCAs: pool, Certificates: []tls.Certificate{bad}}); err == nil {
		t.Fatal("client with a certificate of another CA got through")
	}
}

func TestConfigErrors(t *testing.T) {
	for name, c := range map[string]Config{
		"no model":        {},
		"cert no key":     {Models: []ModelSpec{{"a", "a"}}, TLSCert: "x"},
		"client CA alone": {Models: []ModelSpec{{"a", "a"}}, TLSClientCA: "x"},
		"duplicate name":  {Models: []ModelSpec{{"a", "a"}, {"a", "b"}}},
		"text > message":  {Models: []ModelSpec{{"a", "a"}}, MaxMessageBytes: 2048, MaxTextBytes: 4096},
		"missing cert":    {Models: []ModelSpec{{"a", "a"}}, TLSCert: "/nonexistent.crt", TLSKey: "/nonexistent.key"},
	} {
		c.Load = (&memModels{m: map[string]*model.Model{"a": tinyModel("x"), "b": tinyModel("x")}}).load
		if _, err := NewServer(c); err == nil {
			t.Errorf("%s: no error", name)
		}
	}
}

func TestParseModelSpec(t *testing.T) {
	for in, want := range map[string]ModelSpec{
		"lcsh=/m/lcsh.grove": {"lcsh", "/m/lcsh.grove"},
		"/m/debtags.grove":   {"debtags", "/m/debtags.grove"},
		"demo.grove":         {"demo", "demo.grove"},
	} {
		got, err := ParseModelSpec(in)
		if err != nil || got != want {
			t.Errorf("ParseModelSpec(%q) = %v, %v", in, got, err)
		}
	}
	for _, in := range []string{"", "=x", "x=", "/m/"} {
		if _, err := ParseModelSpec(in); err == nil {
			t.Errorf("ParseModelSpec(%q): no error", in)
		}
	}
}
