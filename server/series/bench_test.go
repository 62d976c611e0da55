package series_test

import (
	"math"
	"testing"

	"cornerbook/server/flags"
	"cornerbook/server/records"
	"cornerbook/server/series"
)

// benchDays is the range of the benchmark: one athlete over 120 days.
const benchDays = 120

// benchCamp is one athlete's 120 days: a morning check-in with mass and
// wellness every day, jumps three days a week, two sessions and eight
// rounds on six days a week; about 1,200 records.
func benchCamp(b *testing.B) flags.Input {
	c := newCamp(b, "kg")
	c.setBout(records.Bout{CampStart: d(0), WeighIn: d(benchDays-2) + "T10:00:00+01:00", WeighInType: "day_before", BoutDay: d(benchDays - 1),
		WeightClass: records.ClassCustom, LimitKg: 66, StartMassKg: 72})
	for i := 0; i < benchDays; i++ {
		day := d(i)
		kg := math.Round((72-0.04*float64(i)+0.3*math.Sin(float64(i)))*10) / 10
		c.add(records.KindCheckin, day, "07:00", records.Checkin{MassKg: &kg, Sleep: ip(3 + i%2), Fatigue: ip(3), Soreness: ip(2 + i%3), Stress: ip(4), Mood: ip(3 + i%2)})
		if i%7 == 0 || i%7 == 2 || i%7 == 4 {
			h := 40 + math.Sin(float64(i))
			c.jump(day, h-0.5, h, h+0.4)
		}
		if i%7 == 6 {
			continue
		}
		c.session(day, 60+float64(i%5)*5, 6)
		c.session(day, 45, 7)
		c.rounds(day, "spar", 4, 1+i%3)
		c.rounds(day, "pads", 4, 2)
	}
	if len(c.recs) < 1000 {
		b.Fatalf("only %d records", len(c.recs))
	}
	return c.input(nil)
}

// BenchmarkBuild120Days draws one athlete's 120-day chart; the baseline is
// what the screen would do without this package: ask the flag engine for
// each of the 120 days (BenchmarkComputePerDay120). Compare the two ns/op
// from one run:
//
//	go test ./server/series -run '^$' -bench 120 -benchmem
func BenchmarkBuild120Days(b *testing.B) {
	in := benchCamp(b)
	from, to := d(0), d(benchDays-1)
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		s := series.Build(in, from, to)
		if len(s.Days) != benchDays {
			b.Fatal(len(s.Days))
		}
	}
}

func BenchmarkComputePerDay120(b *testing.B) {
	in := benchCamp(b)
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		for i := 0; i < benchDays; i++ {
			in.Day = d(i)
			flags.Compute(in)
		}
	}
}
