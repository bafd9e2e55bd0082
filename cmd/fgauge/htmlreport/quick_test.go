package htmlreport

import (
	"os"
	"testing"
)

func TestQuickRender(t *testing.T) {
	dir := t.TempDir()
	if k := os.Getenv("HTMLREPORT_KEEP"); k != "" {
		dir = k
		os.MkdirAll(dir, 0o755)
	}
	writeFixture(t, dir, fixtureOpts{n: 60, populations: true, pedigree: true, runs: true, sitesPerChr: 500,
		extraNames: []string{"<img src=x onerror=alert(1)>", "../../escape", "a/b", "a_b"}})
	if err := Write(dir, Options{PerSample: true}); err != nil {
		t.Fatal(err)
	}
	t.Log(dir)
}
