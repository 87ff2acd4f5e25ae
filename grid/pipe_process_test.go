package grid

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strings"
	"sync"
	"testing"
	"time"
)

// TestMain lets the test binary act as a helper process (for the stderr and the
// kill tests).
func TestMain(m *testing.M) {
	switch os.Getenv("GRID_TEST_HELPER") {
	case "":
		os.Exit(m.Run())
	case "diag":
		os.Exit(helperDiag(os.Args[len(os.Args)-1]))
	case "diag-control":
		os.Exit(helperDiagControl(os.Args[len(os.Args)-1]))
	case "kill":
		os.Exit(helperKill(os.Args[len(os.Args)-2], os.Args[len(os.Args)-1]))
	}
	os.Exit(3)
}

// helperDiag opens, reads and writes netCDF-4 files from many goroutines.
func helperDiag(path string) int {
	var wg sync.WaitGroup
	errs := make(chan error, 16)
	for g := 0; g < 16; g++ {
		wg.Add(1)
		go func(g int) {
			defer wg.Done()
			runtime.LockOSThread() // each caller on its own OS thread
			in, err := Open(path, OpenOptions{})
			if err != nil {
				errs <- err
				return
			}
			defer in.Close()
			if _, err := in.Stats(); err != nil {
				errs <- err
				return
			}
			out, err := Create(filepath.Join(filepath.Dir(path), fmt.Sprintf("o%d.nc", g)), in, testVars(), DefaultWriteOptions())
			if err != nil {
				errs <- err
				return
			}
			if err := Process(in, out, ProcessOptions{Workers: 2}, testCompute); err != nil {
				errs <- err
				return
			}
			if err := out.Commit(); err != nil {
				errs <- err
				return
			}
			if _, err := Describe(out.Path); err != nil {
				errs <- err
			}
		}(g)
	}
	wg.Wait()
	close(errs)
	for err := range errs {
		fmt.Println("error:", err)
		return 1
	}
	// A real error must still come back as an error.
	if _, err := Open(path+".missing", OpenOptions{}); err == nil {
		fmt.Println("no error for a missing file")
		return 1
	}
	return 0
}

// helperDiagControl calls libnetcdf from fresh OS threads without the I/O thread:
// the HDF5-DIAG stacks of libnetcdf 4.9.0 should appear (showing the test can fail).
func helperDiagControl(path string) int {
	var wg sync.WaitGroup
	for g := 0; g < 3; g++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			runtime.LockOSThread()
			if ncid, err := ncOpen(path); err == nil {
				describeIO(ncid, path)
				ncClose(ncid)
			}
		}()
		wg.Wait()
	}
	return 0
}

func TestNoHDF5DiagnosticsOnStderr(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	path := ncgen(t, "grid3d.cdl", "nc4")
	run := func(mode string) (string, string, error) {
		cmd := exec.Command(os.Args[0], "-test.run=^$", path)
		cmd.Env = append(os.Environ(), "GRID_TEST_HELPER="+mode)
		var so, se bytes.Buffer
		cmd.Stdout, cmd.Stderr = &so, &se
		err := cmd.Run()
		return so.String(), se.String(), err
	}
	so, se, err := run("diag")
	if err != nil {
		t.Fatalf("helper failed: %v\nstdout %s\nstderr %s", err, so, se)
	}
	if se != "" {
		t.Errorf("library noise on stderr:\n%.2000s", se)
	}
	_, se, _ = run("diag-control")
	if !strings.Contains(se, "HDF5-DIAG") {
		t.Logf("control run printed no HDF5-DIAG (libnetcdf fixed?); stderr %q", se)
	}
}

// helperKill writes an output slowly and is killed before Commit.
func helperKill(inPath, outPath string) int {
	in, err := Open(inPath, OpenOptions{SlabBytes: 200})
	if err != nil {
		fmt.Println("error:", err)
		return 1
	}
	out, err := Create(outPath, in, testVars(), DefaultWriteOptions())
	if err != nil {
		fmt.Println("error:", err)
		return 1
	}
	var once sync.Once
	Process(in, out, ProcessOptions{Workers: 1}, func(s *Slab, outs [][]float64, lo, hi int) {
		testCompute(s, outs, lo, hi)
		if s.Index >= 1 {
			once.Do(func() { fmt.Println("READY") })
			time.Sleep(time.Hour)
		}
	})
	return 2
}

func TestKilledBeforeCommitLeavesNoFinalFile(t *testing.T) {
	in := ncgen(t, "grid3d.cdl", "nc4")
	dir := t.TempDir()
	final := filepath.Join(dir, "out.nc")
	before, _ := os.ReadFile(in)
	for i := 0; i < 3; i++ {
		cmd := exec.Command(os.Args[0], "-test.run=^$", in, final)
		cmd.Env = append(os.Environ(), "GRID_TEST_HELPER=kill")
		stdout, _ := cmd.StdoutPipe()
		if err := cmd.Start(); err != nil {
			t.Fatal(err)
		}
		line, _ := bufio.NewReader(stdout).ReadString('\n')
		if strings.TrimSpace(line) != "READY" {
			cmd.Process.Kill()
			cmd.Wait()
			t.Fatalf("helper said %q", line)
		}
		cmd.Process.Kill() // SIGKILL mid-write
		cmd.Wait()
		if _, err := os.Stat(final); !errors.Is(err, os.ErrNotExist) {
			t.Fatalf("run %d: final output exists after a kill: %v", i, err)
		}
		ents, _ := os.ReadDir(dir)
		for _, e := range ents {
			if !strings.HasPrefix(e.Name(), ".out.nc.tmp-") {
				t.Errorf("unexpected file %s", e.Name())
			}
		}
	}
	if after, _ := os.ReadFile(in); !bytes.Equal(before, after) {
		t.Error("input changed")
	}
}

func TestBadInputCorpus(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	dir := t.TempDir()
	good := ncgen(t, "grid3d.cdl", "nc4")
	goodBytes, _ := os.ReadFile(good)
	write := func(name string, b []byte) string {
		p := filepath.Join(dir, name)
		os.WriteFile(p, b, 0o644)
		return p
	}
	cases := []struct {
		name     string
		path     string
		sentinel error
		words    []string
	}{
		{"zero bytes", write("empty.nc", nil), ErrNotNetCDF, []string{"empty"}},
		{"text file", write("text.nc", []byte("lwp,re\n1,2\n")), ErrNotNetCDF, []string{"not a netCDF file"}},
		{"truncated netCDF-4", write("trunc.nc", goodBytes[:len(goodBytes)/2]), ErrNotNetCDF, []string{"trunc.nc"}},
		{"missing file", filepath.Join(dir, "nothere.nc"), os.ErrNotExist, []string{"nothere.nc"}},
		{"directory", dir, ErrNotNetCDF, []string{"directory"}},
	}
	// Python-made corrupt inputs: HDF5 without netCDF metadata, a string _FillValue.
	if p := findPython(); p != "" {
		h5 := filepath.Join(dir, "plain.h5")
		sf := filepath.Join(dir, "strfill.nc")
		bf := ncgenText(t, `netcdf bf { dimensions: y = 1 ; x = 2 ; variables: float lwp(y, x) ; lwp:units = "kg m-2" ;
 float re(y, x) ; re:units = "m" ; data: lwp = 1, 2 ; re = 1e-5, 1e-5 ; }`, "nc4")
		b, _ := os.ReadFile(bf)
		os.WriteFile(sf, b, 0o644)
		out, err := exec.Command(p, "-c", `
import sys, h5py
h = h5py.File(sys.argv[1], "w"); h["a"] = [1, 2, 3]; h.close()
f = h5py.File(sys.argv[2], "r+"); f["lwp"].attrs["_FillValue"] = "none"; f.close()
`, h5, sf).CombinedOutput()
		if err != nil {
			t.Fatalf("h5py: %v %s", err, out)
		}
		cases = append(cases,
			struct {
				name     string
				path     string
				sentinel error
				words    []string
			}{"HDF5 without netCDF metadata", h5, ErrNoVariable, []string{"plain.h5", "lwp"}},
			struct {
				name     string
				path     string
				sentinel error
				words    []string
			}{"string _FillValue", sf, ErrDecode, []string{`"lwp"`, "_FillValue", "string", "float"}})
	} else {
		need(t, "python3 with h5py", false)
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := Open(c.path, OpenOptions{})
			if !errors.Is(err, c.sentinel) {
				t.Fatalf("error %v, want %v", err, c.sentinel)
			}
			for _, w := range c.words {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("%q lacks %q", err, w)
				}
			}
			if _, err := Describe(c.path); err == nil && c.sentinel == ErrNotNetCDF {
				t.Error("Describe accepted it")
			}
		})
	}
}

func findPython() string {
	for _, p := range []string{"/usr/bin/python3", "python3"} {
		if exec.Command(p, "-c", "import h5py").Run() == nil {
			return p
		}
	}
	return ""
}
