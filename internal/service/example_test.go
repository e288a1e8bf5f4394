package service_test

import (
	"context"
	"fmt"
	"os"
	"path/filepath"

	"corvane/internal/service"
	"corvane/internal/store/sqlite"
)

// A stateless conversion: one straight hole (azimuth 000, dip -60) and one
// measurement, with the default conventions (bottom-of-hole line, beta to
// the down-hole apex, gamma clockwise, grid output).
func ExampleService_Convert() {
	dir, _ := os.MkdirTemp("", "corvane-example")
	defer os.RemoveAll(dir)
	path := filepath.Join(dir, "example.db")
	if err := sqlite.Migrate(path, 0); err != nil {
		fmt.Println(err)
		return
	}
	st, err := sqlite.Open(context.Background(), path)
	if err != nil {
		fmt.Println(err)
		return
	}
	defer st.Close()
	svc := service.New(st, nil)
	ctx := service.WithActor(context.Background(), service.System)

	resp, err := svc.Convert(ctx, service.ConvertRequest{
		Collars:      []service.ConvertCollar{{HoleID: "ZR001", Azimuth: 0, Dip: -60, FinalDepth: 120}},
		Measurements: []service.ConvertMeasurement{{HoleID: "ZR001", Depth: 42, Alpha: 45, Beta: f64(90)}},
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	d := resp.Results[0].Derived
	fmt.Printf("dip %.1f toward %05.1f (%s north)\n", *d.Dip, *d.DipDirection, d.AzimuthRef)
	// Output: dip 52.2 toward 243.4 (grid north)
}
