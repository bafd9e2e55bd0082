package htmlreport_test

import (
	"fmt"
	"os"
	"path/filepath"

	"fgauge/cmd/fgauge/htmlreport"
)

// A scan output folder needs only samples.tsv for a report; the other
// tables add their sections when present.
func ExampleWrite() {
	dir, err := os.MkdirTemp("", "fgauge-report-example")
	if err != nil {
		fmt.Println(err)
		return
	}
	defer os.RemoveAll(dir)
	samples := "sample\tcall_rate\thet_rate\tf_hom\tf_roh\tflags\n" +
		"HILL-001\t0.99\t0.31\t0.02\t0.03\t.\n" +
		"HILL-002\t0.97\t0.27\t0.09\t0.11\tlow_call_rate\n"
	if err := os.WriteFile(filepath.Join(dir, "samples.tsv"), []byte(samples), 0o644); err != nil {
		fmt.Println(err)
		return
	}
	if err := htmlreport.Write(dir, htmlreport.Options{PerSample: true}); err != nil {
		fmt.Println(err)
		return
	}
	for _, f := range []string{"report.html", "samples/index.html", "samples/HILL-002.html", "samples/HILL-002.json"} {
		_, err := os.Stat(filepath.Join(dir, f))
		fmt.Println(f, err == nil)
	}
	// Output:
	// report.html true
	// samples/index.html true
	// samples/HILL-002.html true
	// samples/HILL-002.json true
}
