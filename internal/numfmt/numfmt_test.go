package numfmt

import (
	"encoding/json"
	"math"
	"testing"
)

func TestFloat(t *testing.T) {
	for _, tc := range []struct {
		x    float64
		want string
	}{
		{0.1, "0.1"}, {1, "1"}, {1e-7, "1e-07"}, {-0.25, "-0.25"}, {1.0 / 3, "0.3333333333333333"},
		{math.NaN(), "NA"}, {math.Inf(1), "NA"}, {math.Inf(-1), "NA"},
	} {
		if got := Float(tc.x); got != tc.want {
			t.Errorf("Float(%v) = %q, want %q", tc.x, got, tc.want)
		}
		if got := string(AppendFloat([]byte("x\t"), tc.x)); got != "x\t"+tc.want {
			t.Errorf("AppendFloat(%v) = %q", tc.x, got)
		}
	}
}

func TestJSONFloat(t *testing.T) {
	type rec struct {
		A JSONFloat   `json:"a"`
		B []JSONFloat `json:"b"`
	}
	// The bytes encoding/json gives for plain float64 values.
	want, _ := json.Marshal(map[string]any{"a": 0.000001234, "b": []any{1.0, 2.5e21, nil}})
	got, err := json.Marshal(rec{0.000001234, []JSONFloat{1, 2.5e21, JSONFloat(math.NaN())}})
	if err != nil || string(got) != string(want) {
		t.Errorf("Marshal = %s, %v; want %s", got, err, want)
	}
	var r rec
	if err := json.Unmarshal([]byte(`{"a":"NA","b":[null,"0.5",3]}`), &r); err != nil {
		t.Fatal(err)
	}
	if !math.IsNaN(float64(r.A)) || !math.IsNaN(float64(r.B[0])) || r.B[1] != 0.5 || r.B[2] != 3 {
		t.Errorf("Unmarshal = %+v", r)
	}
}
