package grid

import (
	"errors"
	"fmt"
	"runtime"
	"sync"
	"sync/atomic"
	"time"
	"unsafe"
)

// ProcessOptions configure Process.
type ProcessOptions struct {
	// Workers computing a slab in parallel (default runtime.GOMAXPROCS(0)).
	Workers int
	// Progress, if set, is called from the writer after each slab with the
	// columns written so far and the total.
	Progress func(doneCols, totalCols int64)
	// SkipCompute makes an I/O-only run (for benchmarks): compute is not called
	// and output variable k receives the decoded values of the k-th bound input
	// role (cycling through them), so the output has realistic contents.
	SkipCompute bool
	// Cancel, when closed (e.g. ctx.Done() on SIGTERM), stops the run: Process
	// aborts the output and returns an error wrapping ErrCanceled.
	Cancel <-chan struct{}
	// Stats, if set, receives the time spent in each stage when Process returns.
	Stats *ProcessStats
	// BlockOutputs hands compute outputs for its block of columns only:
	// outs[k][i-lo] is output k at column i (ComputeFunc). They stay in the
	// core's cache from compute to encoding, where outputs for the whole slab
	// would be fetched from memory before every write.
	BlockOutputs bool
	// LibnetcdfRead reads every input through libnetcdf (on the I/O thread,
	// decompression included) instead of the direct chunk reader where it
	// applies (doc/netcdf.md#direct-chunks).
	LibnetcdfRead bool
}

// ProcessStats are the busy times of the pipeline's stages in one Process call:
// Read and Write are the time the I/O thread spent reading and writing slabs
// (decompression and compression included; the chunks left in the output's cache
// are compressed at Commit, outside Process), Compute the summed time of the
// workers (decoding, compute and encoding), WaitRead the time the workers waited
// for a slab to be read, and Wall the whole call. When Read + Write is close to
// Wall the run is bound by the I/O thread and the compute hides behind it.
type ProcessStats struct {
	Wall, Read, Write, Compute, WaitRead time.Duration
	// Filter is the summed time of the workers filtering output chunks
	// (quantization, shuffle, deflate) for the direct writer.
	Filter time.Duration
	Slabs  int
	// DirectRead lists the bound variables read by the direct chunk reader.
	DirectRead []string
}

// computeBlock is the number of columns a compute goroutine decodes, computes
// and encodes at a time: their decoded inputs and float64 outputs (some 200
// bytes a column) stay in a core's cache between the three steps.
const computeBlock = 2048

// ComputeFunc computes outputs for columns [lo, hi) of slab s: outs[k][i] is
// output variable k at column i, in the output's units (NaN = fill), or
// outs[k][i-lo] with ProcessOptions.BlockOutputs. It runs on several
// goroutines at once, each with its own disjoint range, and must only write
// outs[k][lo:hi] (outs[k][:hi-lo]). Process calls it for ranges of at most computeBlock
// columns, many times per slab.
type ComputeFunc func(s *Slab, outs [][]float64, lo, hi int)

// nBuffers slabs are in flight at most: one being read, one computed, one written.
// Only the raw (stored-type) buffers are needed three times: the decoded inputs
// and the float64 outputs belong to the slab being computed, so one set of them is
// shared by every slab.
const nBuffers = 3

type slabSet struct {
	in     *inBuf
	outRaw [][]uint64
	// The direct writer's filtered chunks of the slab: tasks[i] is stored in
	// arena bytes [tasks[i].at, tasks[i].at+tasks[i].n).
	tasks []chunkTask
	arena []uint64
	// cwg counts the slab's compute jobs not yet done, fwg its chunk filter
	// jobs (Process).
	cwg, fwg sync.WaitGroup
}

// release gives the raw buffers of s back to the pool.
func (s *inBuf) release() {
	for i := range s.raw {
		putRaw(s.raw[i])
		s.raw[i] = nil
	}
}

// Process streams in through compute into out: the I/O goroutine reads slab k+1
// and writes slab k-2 while Workers goroutines compute slab k (decoding, compute
// and encoding all run in the workers, in jobs of whole blocks, computeStep) and
// filter the chunks of slab k-1 (the direct writer) as they come free. Memory is bounded by three raw slab
// buffers and one set of decoded ones. On any error (or a panic in compute)
// everything stops, the output is aborted and the first error is returned; on
// success the caller calls out.Commit().
func Process(in *Input, out *Output, opt ProcessOptions, compute ComputeFunc) (err error) {
	if compute == nil && !opt.SkipCompute {
		return errors.New("grid: Process needs a compute function or SkipCompute")
	}
	if out.in != in {
		return errors.New("grid: Process: the output was created for another input")
	}
	workers := opt.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	p := out.plan
	var ioErr error
	var dr *directReader
	if e := onIO(func() {
		if ioErr = in.setInputCachesIO(p); ioErr == nil && !opt.LibnetcdfRead {
			if d := in.openDirectReadIO(); d != nil {
				dr = newDirectReader(in, d, workers)
			}
		}
	}); e != nil || ioErr != nil {
		if dr != nil {
			onIO(dr.d.closeIO)
			dr.release()
		}
		out.Abort()
		return firstErr(e, ioErr)
	}
	var directNames []string
	if dr != nil {
		defer func() {
			onIO(dr.d.closeIO)
			dr.release()
		}()
		for _, v := range dr.d.vars {
			if v != nil {
				directNames = append(directNames, v.name)
			}
		}
	}
	// Buffers: three raw sets, one decoded set (see nBuffers), from the pool.
	var decIn [NumRoles][]float64
	for i, b := range in.bindings {
		if b != nil {
			decIn[i] = getF64(p.maxN)
		}
	}
	decOut := make([][]float64, len(out.types))
	for k := range decOut {
		if !opt.BlockOutputs {
			decOut[k] = getF64(p.maxN)
		}
	}
	sets := make([]*slabSet, nBuffers)
	free := make(chan *slabSet, nBuffers)
	for i := range sets {
		s := &slabSet{in: newRawBuf(in, p)}
		n := p.maxN
		if out.direct != nil {
			n = out.direct.slabValues(p) // the chunk layout (encodeChunks)
		}
		for _, t := range out.types {
			s.outRaw = append(s.outRaw, getRaw(rawWords(n, t.Size())))
		}
		if out.direct != nil {
			s.arena = getRaw(rawWords(out.direct.arenaBytes(p, len(out.types)), 1))
		}
		sets[i] = s
		free <- s
	}
	defer func() { // every goroutine has finished when Process returns
		for _, s := range sets {
			s.in.release()
			for k := range s.outRaw {
				putRaw(s.outRaw[k])
			}
			if s.arena != nil {
				putRaw(s.arena)
			}
		}
		for i := range decIn {
			if decIn[i] != nil {
				putF64(decIn[i])
			}
		}
		for k := range decOut {
			if decOut[k] != nil {
				putF64(decOut[k])
			}
		}
	}()
	var (
		stop    atomic.Bool
		errOnce sync.Once
		first   error
	)
	fail := func(e error) {
		errOnce.Do(func() { first = e })
		stop.Store(true)
	}
	if opt.Cancel != nil {
		finished := make(chan struct{})
		defer close(finished)
		go func() {
			select {
			case <-opt.Cancel:
				fail(fmt.Errorf("%w: %s -> %s", ErrCanceled, in.Path, out.Path))
			case <-finished:
			}
		}()
	}
	tStart := time.Now()
	var readDur, writeDur, waitRead time.Duration
	var computeNs, filterNs atomic.Int64
	nSlabs := 0
	if opt.Stats != nil {
		defer func() {
			if dr != nil {
				readDur += dr.busy
			}
			*opt.Stats = ProcessStats{Wall: time.Since(tStart), Read: readDur, Write: writeDur,
				Compute: time.Duration(computeNs.Load()), Filter: time.Duration(filterNs.Load()), WaitRead: waitRead, Slabs: nSlabs,
				DirectRead: directNames}
		}()
	}
	readQ := make(chan *slabSet, nBuffers)
	writeQ := make(chan *slabSet, nBuffers)
	var wg sync.WaitGroup

	// Reader.
	wg.Add(1)
	go func() {
		defer wg.Done()
		defer close(readQ)
		var cur *slabSet
		var rerr error
		call := newIOCall(func() {
			t0 := time.Now()
			rerr = in.readIO(cur.in)
			readDur += time.Since(t0)
		})
		k := 0
		p.each(func(lead, y0, ny, x0, nx int) error {
			if stop.Load() {
				return errStop
			}
			cur = <-free
			cur.in.setPos(p, k, lead, y0, ny, x0, nx)
			k++
			var e error
			if dr != nil {
				rerr = dr.read(cur.in)
			} else {
				e = call.run()
			}
			if e != nil || rerr != nil {
				fail(firstErr(e, rerr))
				free <- cur
				return errStop
			}
			readQ <- cur
			return nil
		})
	}()

	// Writer.
	var done int64
	wg.Add(1)
	go func() {
		defer wg.Done()
		var cur *slabSet
		var werr error
		call := newIOCall(func() {
			t0 := time.Now()
			if out.direct != nil {
				werr = out.writeChunksIO(cur.in.start, cur.tasks, arenaBytes(cur.arena), cur.in.slab.Index)
			} else {
				werr = out.writeIO(cur.in.start, cur.in.count, cur.outRaw, cur.in.slab.Index)
			}
			writeDur += time.Since(t0)
		})
		for s := range writeQ {
			if !stop.Load() {
				cur = s
				if e := call.run(); e != nil || werr != nil {
					fail(firstErr(e, werr))
				} else {
					done += int64(s.in.slab.N)
					if opt.Progress != nil {
						opt.Progress(done, p.total)
					}
				}
			}
			free <- s
		}
	}()

	// Workers: the calling goroutine hands out ranges.
	type job struct {
		s      *slabSet
		lo, hi int
		task   int // >= 0: filter chunk task s.tasks[task] (direct writer)
	}
	jobs := make(chan job, workers)
	var bound []int
	for i, b := range in.bindings {
		if b != nil {
			bound = append(bound, i)
		}
	}
	filter := func(j job) {
		t0 := time.Now()
		defer func() { filterNs.Add(int64(time.Since(t0))) }()
		defer j.s.fwg.Done()
		defer func() {
			if r := recover(); r != nil {
				fail(fmt.Errorf("grid: filtering a chunk panicked on slab %d: %v", j.s.in.slab.Index, r))
			}
		}()
		t := &j.s.tasks[j.task]
		s := getScratch(out.deflate, out.shuffleRoom(t.k))
		defer putScratch(s)
		in := out.chunkInput(s, t, j.s.outRaw[t.k], j.s.in.ny, j.s.in.nx)
		if err := out.filterChunk(t, s, in, arenaBytes(j.s.arena)); err != nil {
			fail(err)
		}
	}
	work := func(j job, blk [][]float64) {
		if j.task >= 0 {
			filter(j)
			return
		}
		t0 := time.Now()
		defer func() { computeNs.Add(int64(time.Since(t0))) }()
		defer j.s.cwg.Done()
		defer func() {
			if r := recover(); r != nil {
				fail(fmt.Errorf("grid: compute panicked on slab %d: %v", j.s.in.slab.Index, r))
			}
		}()
		// Blocks of computeBlock columns go through decode, compute and encode
		// one after the other while their values are in the core's cache.
		for lo := j.lo; lo < j.hi; lo += computeBlock {
			hi := min(lo+computeBlock, j.hi)
			in.decode(j.s.in, lo, hi)
			outs, off := decOut, 0 // outs[k][i-off] is output k at column i
			if opt.BlockOutputs {
				outs, off = blk, lo
				for k := range blk {
					blk[k] = blk[k][:hi-lo]
				}
			}
			if opt.SkipCompute {
				for k := range outs {
					copy(outs[k][lo-off:hi-off], j.s.in.slab.In[bound[k%len(bound)]][lo:hi])
				}
			} else {
				compute(&j.s.in.slab, outs, lo, hi)
			}
			for k := range outs {
				src := outs[k][lo-off : hi-off]
				if out.direct != nil {
					out.encodeChunks(k, j.s.outRaw[k], src, lo, hi, j.s.in.nx)
				} else {
					t := out.types[k]
					encode(&out.vars[k], t, unsafe.Add(unsafe.Pointer(&j.s.outRaw[k][0]), lo*t.Size()), src, 0, hi-lo)
				}
			}
		}
	}
	var pool sync.WaitGroup
	for w := 0; w < workers; w++ {
		pool.Add(1)
		go func() {
			defer pool.Done()
			var blk [][]float64 // this worker's block of outputs (BlockOutputs)
			if opt.BlockOutputs {
				blk = make([][]float64, len(out.types))
				for k := range blk {
					blk[k] = make([]float64, computeBlock)
				}
			}
			for j := range jobs {
				work(j, blk)
			}
		}()
	}
	// The finisher takes the slabs in order: once a slab's compute jobs are done it
	// queues the slab's chunk filter jobs (direct writer), which run while the
	// workers compute the next slab, and hands the slab to the writer when they are
	// done, so the writer stores the slabs in order and the file layout does not
	// depend on the workers.
	pending := make(chan *slabSet, nBuffers)
	finDone := make(chan struct{})
	go func() {
		defer close(finDone)
		for s := range pending {
			s.cwg.Wait()
			if out.direct != nil && !stop.Load() {
				s.tasks, _ = out.direct.slabTasks(s.tasks, len(out.types), s.in.ny, s.in.nx)
				for i := range s.tasks {
					s.fwg.Add(1)
					jobs <- job{s, 0, 0, i}
				}
				s.fwg.Wait()
			}
			writeQ <- s
		}
	}()
	var prev *slabSet
	for {
		t0 := time.Now()
		s, ok := <-readQ
		waitRead += time.Since(t0)
		if !ok {
			break
		}
		nSlabs++
		if stop.Load() {
			free <- s
			continue
		}
		// The decoded buffers are lent to one slab at a time: the previous slab's
		// compute jobs must be done before this slab's start.
		if prev != nil {
			prev.cwg.Wait()
		}
		prev = s
		n := s.in.slab.N
		for i := range decIn { // lend the decoded buffers to this slab
			if decIn[i] != nil {
				s.in.slab.In[i] = decIn[i][:n]
			}
		}
		for k := range decOut {
			if decOut[k] != nil {
				decOut[k] = decOut[k][:cap(decOut[k])][:n]
			}
		}
		step := computeStep(n, workers)
		for lo := 0; lo < n; lo += step {
			s.cwg.Add(1)
			jobs <- job{s, lo, min(lo+step, n), -1}
		}
		pending <- s
	}
	close(pending)
	<-finDone
	close(jobs)
	pool.Wait()
	close(writeQ)
	wg.Wait()
	errOnce.Do(func() {}) // no later failure can change first
	if first != nil {
		out.Abort()
		return first
	}
	return nil
}

var errStop = errors.New("stop")

// computeStep is the number of columns of one compute job of a slab of n columns
// on workers workers: about eight jobs per worker, whole blocks of computeBlock
// columns, so that a worker the I/O thread or another process held back leaves
// the others only a small job to wait for at the end of the slab.
func computeStep(n, workers int) int {
	per := (n + 8*workers - 1) / (8 * workers)
	return max(computeBlock, (per+computeBlock-1)/computeBlock*computeBlock)
}
