package report

import (
	"bytes"
	"encoding/json"
	"strings"
	"testing"

	"enough/designs"
	"enough/designs/sweep"
)

func fp(x float64) *float64 { return &x }

// inventedSweep is a sweep of three invented points (their numbers made
// up, not computed): planned, planned with a missing detectable side, and
// one with an error that holds a comma, quotes and a pipe.
func inventedSweep() *sweep.Table {
	h := sweep.Header{
		Version: designs.Version, SpecSHA256: "00", Overrides: []string{},
		Vary:     []string{"n=100,2000,5"},
		Columns:  []string{"n", sweep.ColAnalysableFirst, sweep.ColAnalysableSecond, sweep.ColAnalysableTotal, sweep.ColEnrolTotal, sweep.ColDetectableLower, sweep.ColDetectableUpper, sweep.ColError},
		GridSize: 3,
	}
	return &sweep.Table{Header: h, Records: []sweep.Record{
		{Index: 0, Point: []string{"100"}, Result: &designs.Answer{N: []int{90, 90}, Total: 180, EnrolTotal: 200,
			Detectable: &designs.Detectable{Scale: "risk_ratio", Lower: fp(0.4123456789012346), Upper: fp(2.0049999)}}},
		{Index: 1, Point: []string{"2000"}, Result: &designs.Answer{N: []int{1800, 1800}, Total: 3600, EnrolTotal: 4000,
			Detectable: &designs.Detectable{Scale: "risk_ratio", Lower: fp(0.00001234), Upper: nil}}},
		{Index: 2, Point: []string{"5"}, Error: json.RawMessage(`{"file":"s.yaml","line":4,"key":"n","value":null,"message":"5 leaves \"no one\", after attrition | twice","allowed":"more"}`)},
	}}
}

// TestSweepFormats checks each format of an invented sweep, written out
// by hand from the rules of README's "Sweeping assumptions".
func TestSweepFormats(t *testing.T) {
	for _, c := range []struct{ format, want string }{
		{"csv", `n,analysable_first,analysable_second,analysable_total,enrol_total,detectable_lower,detectable_upper,error
100,90,90,180,200,0.4123456789012346,2.0049999,
2000,1800,1800,3600,4000,1.234e-05,,
5,,,,,,,"n: 5 leaves ""no one"", after attrition | twice; allowed: more"
`},
		{"markdown", `|    n | analysable_first | analysable_second | analysable_total | enrol_total | detectable_lower | detectable_upper | error                                                         |
| ---: | ---------------: | ----------------: | ---------------: | ----------: | ---------------: | ---------------: | :------------------------------------------------------------ |
|  100 |               90 |                90 |              180 |         200 |           0.4123 |            2.005 |                                                               |
| 2000 |             1800 |              1800 |             3600 |        4000 |       0.00001234 |                  |                                                               |
|    5 |                  |                   |                  |             |                  |                  | n: 5 leaves "no one", after attrition \| twice; allowed: more |
`},
		{"table", `   n  analysable_first  analysable_second  analysable_total  enrol_total  detectable_lower  detectable_upper  error
----  ----------------  -----------------  ----------------  -----------  ----------------  ----------------  ------------------------------------------------------------
 100                90                 90               180          200            0.4123             2.005
2000              1800               1800              3600         4000        0.00001234
   5                                                                                                          n: 5 leaves "no one", after attrition | twice; allowed: more
`},
	} {
		var b bytes.Buffer
		if err := WriteSweep(&b, inventedSweep(), c.format); err != nil {
			t.Fatal(err)
		}
		if b.String() != c.want {
			t.Errorf("%s:\n%s\nwant\n%s", c.format, b.String(), c.want)
		}
	}
}

// TestSweepJSON checks the array: one object per line, the point's keys as
// given, the result, the error object as it stands.
func TestSweepJSON(t *testing.T) {
	var b bytes.Buffer
	if err := WriteSweep(&b, inventedSweep(), "json"); err != nil {
		t.Fatal(err)
	}
	want := `[
{"point":{"n":100},"result":{"n":[90,90],"total":180,"enrol":null,"enrol_total":200,"detectable":{"scale":"risk_ratio","lower":0.4123456789012346,"upper":2.0049999}},"error":null},
{"point":{"n":2000},"result":{"n":[1800,1800],"total":3600,"enrol":null,"enrol_total":4000,"detectable":{"scale":"risk_ratio","lower":0.00001234,"upper":null}},"error":null},
{"point":{"n":5},"result":null,"error":{"file":"s.yaml","line":4,"key":"n","value":null,"message":"5 leaves \"no one\", after attrition | twice","allowed":"more"}}
]
`
	if b.String() != want {
		t.Errorf("json:\n%s\nwant\n%s", b.String(), want)
	}
	var v []map[string]any
	if err := json.Unmarshal(b.Bytes(), &v); err != nil || len(v) != 3 {
		t.Errorf("not an array of 3 objects: %v", err)
	}
}

func TestSweepUnknownFormat(t *testing.T) {
	if err := WriteSweep(&bytes.Buffer{}, inventedSweep(), "xml"); err == nil || !strings.Contains(err.Error(), "xml") {
		t.Errorf("error %v; want one naming the format", err)
	}
	tb := inventedSweep()
	tb.Header.Columns[1] = "analysable_thirds"
	if err := WriteSweep(&bytes.Buffer{}, tb, "csv"); err == nil || !strings.Contains(err.Error(), "analysable_thirds") {
		t.Errorf("error %v; want one naming the unknown column", err)
	}
}

func TestSig4(t *testing.T) {
	for x, want := range map[float64]string{
		0.80123456: "0.8012", 0.8: "0.8000", 123.456: "123.5", 12345.6: "12346", 0.0040123: "0.004012",
		0.99996: "1.000", -3.14159: "-3.142", 1e-12: "1e-12", 0: "0", 2.0049999: "2.005", 1234567: "1234567",
	} {
		if got := sig4(x); got != want {
			t.Errorf("sig4(%v) = %q; want %q", x, got, want)
		}
	}
}

// TestSweepCSVByTables: a sweep written table by table (SweepCSV, as large
// sweeps are streamed), in one record per table or all at once, gives the
// bytes WriteSweep writes for the whole table.
func TestSweepCSVByTables(t *testing.T) {
	whole := inventedSweep()
	var want bytes.Buffer
	if err := WriteSweep(&want, whole, "csv"); err != nil {
		t.Fatal(err)
	}
	for _, size := range []int{1, 2, 3} {
		var got bytes.Buffer
		c, err := NewSweepCSV(&got, &whole.Header)
		if err != nil {
			t.Fatal(err)
		}
		for lo := 0; lo < len(whole.Records); lo += size {
			part := &sweep.Table{Header: whole.Header, Records: whole.Records[lo:min(lo+size, len(whole.Records))]}
			if err := c.Write(part); err != nil {
				t.Fatal(err)
			}
		}
		if got.String() != want.String() {
			t.Errorf("tables of %d records:\n%s\nwant\n%s", size, got.String(), want.String())
		}
	}
}
