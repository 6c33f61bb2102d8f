package results

import (
	"bytes"
	"encoding/csv"
	"math"
	"strings"
	"testing"
)

func testSummary() *Summary {
	ok := NewRow("scans/a.csv")
	ok.Status, ok.Verdict, ok.Wafer, ok.Lot = StatusOK, "pass", "W01", "L1"
	ok.XMM, ok.YMM = 0, -22.5
	ok.EgEV, ok.EgErrEV, ok.EgExpandedEV = 1.4240000000000002, 0.0005, 0.001
	ok.UrbachEV, ok.PointsUsed, ok.EgDetermined = 0.0078, 160, true
	ok.Verdicts = []LimitVerdict{{Quantity: "eg_ev", Verdict: "pass"}}
	ok.Warnings = []string{"first", "second, with a comma"}
	ok.Extra = []Column{{Name: "operator", Value: "ak"}, {Name: "file", Value: "clash"}}
	bad := NewRow("scans/b.csv")
	bad.Status, bad.Error = StatusFailed, "b.csv:3:1: \"x\" is not a number\n(second line)"
	return &Summary{Schema: SummarySchema, Tool: "bandedge", Version: "test", DecisionRule: "rule",
		Limits:       []LimitBound{{Quantity: "eg_ev", Lo: 1.415, Hi: 1.435}, {Quantity: "wafer.eg_ev.count", Lo: 5, Hi: Num(math.NaN())}},
		ExtraColumns: []string{"operator", "file"}, Rows: []Row{ok, bad}}
}

func TestWriteSummaryCSV(t *testing.T) {
	var b bytes.Buffer
	if err := WriteSummaryCSV(&b, testSummary()); err != nil {
		t.Fatal(err)
	}
	recs, err := csv.NewReader(&b).ReadAll()
	if err != nil {
		t.Fatalf("summary.csv does not read back: %v", err)
	}
	if len(recs) != 3 {
		t.Fatalf("%d records, want header + 2", len(recs))
	}
	col := map[string]int{}
	for i, h := range recs[0] {
		if _, dup := col[h]; dup {
			t.Errorf("header %q repeated", h)
		}
		col[h] = i
	}
	get := func(r int, h string) string {
		i, ok := col[h]
		if !ok {
			t.Fatalf("no column %q in %v", h, recs[0])
		}
		return recs[r][i]
	}
	// Every digit kept (strconv 'g', -1), NaN as an empty cell.
	if get(1, "eg_ev") != "1.4240000000000002" || get(1, "eg_err_ev") != "0.0005" || get(1, "eg_expanded_ev") != "0.001" {
		t.Errorf("E_g cells %q %q %q", get(1, "eg_ev"), get(1, "eg_err_ev"), get(1, "eg_expanded_ev"))
	}
	if get(1, "ep_ev") != "" || get(2, "eg_ev") != "" || get(2, "points_used") != "" {
		t.Errorf("NaN cells not empty: %q %q %q", get(1, "ep_ev"), get(2, "eg_ev"), get(2, "points_used"))
	}
	if get(1, "verdict:eg_ev") != "pass" || get(1, "decision_rule") != "rule" || get(2, "decision_rule") != "" {
		t.Errorf("verdict cells")
	}
	if _, ok := col["verdict:wafer.eg_ev.count"]; ok {
		t.Error("a wafer-level limit got a per-scan column")
	}
	if get(1, "operator") != "ak" || get(1, "sheet:file") != "clash" || get(1, "file") != "scans/a.csv" {
		t.Errorf("pass-through cells %q %q %q", get(1, "operator"), get(1, "sheet:file"), get(1, "file"))
	}
	if get(1, "warnings") != "first | second, with a comma" || get(1, "y_mm") != "-22.5" {
		t.Errorf("warnings %q y %q", get(1, "warnings"), get(1, "y_mm"))
	}
}

func TestSummaryJSONRoundTrip(t *testing.T) {
	var b bytes.Buffer
	s := testSummary()
	if err := WriteSummaryJSON(&b, s); err != nil {
		t.Fatal(err)
	}
	got, err := ReadSummaryJSON(bytes.NewReader(b.Bytes()), "summary.json")
	if err != nil {
		t.Fatal(err)
	}
	if len(got.Rows) != 2 || got.Rows[0].EgEV != s.Rows[0].EgEV || !math.IsNaN(got.Rows[1].EgEV.Float()) ||
		!math.IsNaN(got.Limits[1].Hi.Float()) || got.Rows[0].Extra[0] != s.Rows[0].Extra[0] {
		t.Errorf("round trip: %+v", got.Rows)
	}
	if _, err := ReadSummaryJSON(strings.NewReader(`{"tool":"other","schema":1}`), "x.json"); err == nil {
		t.Error("foreign JSON accepted")
	}
}

func TestWriteFailures(t *testing.T) {
	var b bytes.Buffer
	s := testSummary()
	c := NewRow("scans/c.csv")
	c.Status = StatusCancelled
	s.Rows = append(s.Rows, c)
	if err := WriteFailures(&b, s.Rows); err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSuffix(b.String(), "\n"), "\n")
	if len(lines) != 2 || lines[0] != `b.csv:3:1: "x" is not a number (second line)` || lines[1] != "scans/c.csv: cancelled" {
		t.Errorf("failures.txt:\n%s", b.String())
	}
}

func TestRowValue(t *testing.T) {
	r := testSummary().Rows[0]
	for _, tc := range []struct {
		q    string
		want float64
	}{{"eg_ev", 1.4240000000000002}, {"eg_err_ev", 0.0005}, {"urbach_ev", 0.0078}, {"points_used", 160}} {
		if v, ok := r.Value(tc.q); !ok || v != tc.want {
			t.Errorf("Value(%s) = %g, %v", tc.q, v, ok)
		}
	}
	if _, ok := r.Value("nonsense"); ok {
		t.Error("unknown quantity known")
	}
	bad := testSummary().Rows[1]
	if v, _ := bad.Value("points_used"); !math.IsNaN(v) {
		t.Errorf("points_used of a failed row = %g", v)
	}
}

func TestWriteRollupCSV(t *testing.T) {
	ru := &Rollup{DecisionRule: "rule", Groups: []GroupRow{
		{Level: "wafer", Lot: "L1", Wafer: "W01", Scans: 3, Fitted: 3, Verdict: "fail", Reasons: []string{"a", "b"},
			Stats: []QuantityStats{{Quantity: "eg_ev", Count: 3, Mean: 1.42, StdDev: 0.001, Min: 1.419, Max: 1.421, Range: 0.002, Nonuniformity: 0.0007}}},
		{Level: "lot", Lot: "L1", Scans: 3},
	}}
	var b bytes.Buffer
	if err := WriteRollupCSV(&b, ru); err != nil {
		t.Fatal(err)
	}
	recs, err := csv.NewReader(&b).ReadAll()
	if err != nil || len(recs) != 3 {
		t.Fatalf("%v %d", err, len(recs))
	}
	h := recs[0]
	idx := func(name string) int {
		for i, x := range h {
			if x == name {
				return i
			}
		}
		t.Fatalf("no column %s", name)
		return 0
	}
	if recs[1][idx("eg_ev.mean")] != "1.42" || recs[1][idx("reasons")] != "a | b" || recs[2][idx("eg_ev.mean")] != "" ||
		recs[2][idx("urbach_ev.count")] != "0" || recs[2][idx("decision_rule")] != "" {
		t.Errorf("rollup rows %v", recs)
	}
}
