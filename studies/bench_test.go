package studies

import "testing"

func BenchmarkParseDemo(b *testing.B) {
	src := DemoSource()
	for b.Loop() {
		if _, err := Parse("demo.yaml", src); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(len(src))*float64(b.N)/b.Elapsed().Seconds()/1e6, "MB/s")
}
