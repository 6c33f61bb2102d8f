package results

import (
	"bytes"
	"context"
	"encoding/json"
	"os"
	"path/filepath"
	"slices"
	"testing"
	"time"

	"bandedge/fit/scan"
)

// analysed returns a real analysis of a scan of the batch test lot
// (testdata/README.md, section batch) and its record.
func analysed(t *testing.T) (*scan.Outcome, *Record) {
	t.Helper()
	path := filepath.Join("..", "..", "testdata", "batch", "scans", "KM2611-W01-s01.csv")
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	s := scan.Settings{Thickness: 2e-4, ThicknessRelErr: 0.02, Index: 3.6, IndexErr: 0.05, WavelengthErr: 0.2, Coverage: 2, Columns: "1,2", XColumn: "1", YColumn: "2"}
	o, err := scan.Analyze(context.Background(), path, b, s)
	if err != nil {
		t.Fatal(err)
	}
	return o, FromOutcome(o, NewProvenance("test", s, time.Date(2026, 3, 1, 0, 0, 0, 0, time.UTC)))
}

// TestRecordRoundTrip: a record written and read back gives the same row
// as the analysis (RowFromRecord is all --resume has), the same bytes when
// written again, and the analysis settings (columns parsed back from
// their text) with the recorded digest.
func TestRecordRoundTrip(t *testing.T) {
	o, rec := analysed(t)
	var b bytes.Buffer
	if err := WriteJSON(&b, rec); err != nil {
		t.Fatal(err)
	}
	back, err := ReadRecord(bytes.NewReader(b.Bytes()), "r.json")
	if err != nil {
		t.Fatal(err)
	}
	var again bytes.Buffer
	WriteJSON(&again, back)
	if !bytes.Equal(b.Bytes(), again.Bytes()) {
		t.Error("record changes when read back and written again")
	}
	r1, _ := json.Marshal(RowFromOutcome(o, rec))
	r2, _ := json.Marshal(RowFromRecord(back))
	if !bytes.Equal(r1, r2) {
		t.Errorf("row from the read-back record differs:\n%s\n%s", r1, r2)
	}
	s, err := back.Provenance.AnalysisSettings()
	if err != nil || s.XColumn != "1" || s.YColumn != "2" || SettingsDigest(s) != rec.Provenance.SettingsSHA256 {
		t.Errorf("settings %+v (%v), digest %s, recorded %s", s, err, SettingsDigest(s), rec.Provenance.SettingsSHA256)
	}
	if rec.Provenance.Model != "direct+urbach" || rec.Provenance.Tail != "urbach" || len(rec.Issues) != 0 {
		t.Errorf("provenance model %q tail %q, issues %q", rec.Provenance.Model, rec.Provenance.Tail, rec.Issues)
	}
	if _, err := ReadRecord(bytes.NewReader([]byte(`{"file": "x"}`)), "x.json"); err == nil {
		t.Error("a JSON object that is not a record was accepted")
	}
}

// TestIssues: each condition of an untrustworthy fit gives its issue, in
// the order of severity, the row's status and a sentence naming it.
func TestIssues(t *testing.T) {
	o, _ := analysed(t)
	res := o.Result
	res.Converged, res.Status = false, "IterationLimit"
	res.Fit.Cov = nil
	res.Params[2].AtBound = true
	rec := FromOutcome(o, Provenance{})
	want := []string{IssueNotConverged, IssueSingular, IssueAtBound}
	if !slices.Equal(rec.Issues, want) {
		t.Fatalf("issues %q, want %q", rec.Issues, want)
	}
	if row := RowFromRecord(rec); row.Status != StatusNotConverged || !Fitted(row.Status) {
		t.Errorf("status %q", row.Status)
	}
	text := rec.IssueText()
	for _, s := range []string{"did not converge (IterationLimit)", "covariance could not be computed", "E_U ended on its bound"} {
		if !bytes.Contains([]byte(text), []byte(s)) {
			t.Errorf("issue text %q lacks %q", text, s)
		}
	}
	for _, st := range []string{StatusFailed, StatusCancelled, ""} {
		if Fitted(st) {
			t.Errorf("Fitted(%q)", st)
		}
	}
}
