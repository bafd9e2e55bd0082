package main

import (
	"flag"
	"io"
	"os"
	"path/filepath"
	"testing"
)

func TestROHFlags(t *testing.T) {
	dir := t.TempDir()
	mapFile := filepath.Join(dir, "map.txt")
	if err := os.WriteFile(mapFile, []byte("chrom pos cm\n1 1000 0\n1 2000000 2\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		args    []string
		wantNil bool
		wantErr bool
		check   func(t *testing.T, f *rohFlags)
	}{
		{args: nil},
		{args: []string{"--no-roh"}, wantNil: true},
		{args: []string{"--roh-classes", "0.5,2"}},
		{args: []string{"--roh-classes", "1,x"}, wantErr: true},
		{args: []string{"--roh-method", "magic"}, wantErr: true},
		{args: []string{"--species", "unicorn"}, wantErr: true},
		{args: []string{"--recombination-map", filepath.Join(dir, "absent.txt")}, wantErr: true},
		{args: []string{"--recombination-map", mapFile, "--species", "pig", "--autosomes", "chr1, chr2"}},
		{args: []string{"--roh-method", "rules", "--rules-max-het", "0", "--rules-min-sites", "0"}, wantErr: true},
	}
	for _, tc := range tests {
		fs := flag.NewFlagSet("scan", flag.ContinueOnError)
		fs.SetOutput(io.Discard)
		f := addROHFlags(fs)
		if err := fs.Parse(tc.args); err != nil {
			t.Fatalf("%v: %v", tc.args, err)
		}
		cfg, err := f.config()
		if (err != nil) != tc.wantErr {
			t.Errorf("%v: err = %v", tc.args, err)
			continue
		}
		if err != nil {
			continue
		}
		if (cfg == nil) != tc.wantNil {
			t.Errorf("%v: config nil = %v", tc.args, cfg == nil)
		}
	}
	// values reach the configuration
	fs := flag.NewFlagSet("scan", flag.ContinueOnError)
	f := addROHFlags(fs)
	fs.Parse([]string{"--recombination-map", mapFile, "--species", "pig", "--autosomes", "chr1, chr2", "--roh-classes", "4,1"})
	cfg, err := f.config()
	if err != nil {
		t.Fatal(err)
	}
	if cfg.CMPerMB != 0.9 || len(cfg.Autosomes) != 2 || cfg.Autosomes[1] != "chr2" || cfg.Map == nil ||
		len(cfg.Classes) != 2 || cfg.Classes[0] != 1 {
		t.Errorf("config %+v", cfg)
	}
}
