package batch

import (
	"bufio"
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/exec"
	"regexp"
	"strings"
	"sync"
	"syscall"
	"time"
)

// Pool runs tasks in supervised child processes, one task at a time per
// child: a task is one line written to the child's stdin, its answer one line
// the child writes to its stdout. A child that dies (a segfault or abort in a
// C library, the kernel's out-of-memory killer) fails only the task it was
// given; a new child takes the remaining tasks. The parent reads every
// child's stdout and stderr to the end with bounded memory, so a child never
// blocks on a full pipe and the parent never waits on an answer that does not
// come: an answer longer than MaxAnswer is dropped (the task is reported with
// TooLong).
type Pool struct {
	Jobs      int
	Command   func() *exec.Cmd // a new child; the pool sets its Stdin, Stdout and Stderr
	Stderr    io.Writer        // the children's messages are copied here, line by line
	MaxAnswer int              // longest answer line kept (bytes)
	Grace     time.Duration    // after a cancel: SIGTERM, then SIGKILL after Grace
}

// Answer is the outcome of one task.
type Answer struct {
	Line    []byte // the child's answer (without the newline); nil if none
	TooLong int    // > 0: the answer had this many bytes and was dropped
	Death   *Death // the child ended without answering
}

// Death tells how a child ended without answering its task.
type Death struct {
	Signal   string // "SIGSEGV", "SIGABRT", "SIGKILL", ... ("" when unknown)
	ExitCode int    // -1 when killed by a signal
	Message  string // in plain words, for the manifest and the user
}

// Run hands out the tasks and calls answer (never concurrently) for each task
// that was handed out. After ctx is cancelled no task is handed out, the
// children get SIGTERM and, after Grace, SIGKILL; Run returns when every
// child has ended. The error is set only when no child could be started.
func (p *Pool) Run(ctx context.Context, tasks []string, answer func(task int, a Answer)) error {
	queue := make(chan int, len(tasks))
	for i := range tasks {
		queue <- i
	}
	close(queue)
	var mu sync.Mutex // serializes answer and the list of live children
	live := map[*child]bool{}
	stopped := make(chan struct{})
	go func() {
		select {
		case <-ctx.Done():
		case <-stopped:
			return
		}
		mu.Lock()
		for c := range live {
			c.signal(syscall.SIGTERM)
		}
		mu.Unlock()
		select {
		case <-time.After(p.Grace):
		case <-stopped:
			return
		}
		mu.Lock()
		for c := range live {
			c.signal(syscall.SIGKILL)
		}
		mu.Unlock()
	}()
	var wg sync.WaitGroup
	errs := make([]error, p.Jobs)
	for k := 0; k < p.Jobs; k++ {
		wg.Add(1)
		go func(k int) {
			defer wg.Done()
			var c *child
			defer func() {
				if c != nil {
					c.finish()
					mu.Lock()
					delete(live, c)
					mu.Unlock()
				}
			}()
			for {
				if ctx.Err() != nil {
					return
				}
				t, ok := <-queue
				if !ok {
					return
				}
				if c == nil {
					var err error
					if c, err = p.start(); err != nil {
						errs[k] = err
						mu.Lock()
						answer(t, Answer{Death: &Death{ExitCode: -1, Message: "could not start a worker process: " + err.Error()}})
						mu.Unlock()
						return
					}
					mu.Lock()
					live[c] = true
					if ctx.Err() != nil {
						c.signal(syscall.SIGTERM)
					}
					mu.Unlock()
				}
				var a Answer
				if _, err := io.WriteString(c.stdin, tasks[t]+"\n"); err == nil {
					if m, ok := c.answer(); ok {
						a = Answer{Line: m.line, TooLong: m.tooLong}
					}
				}
				if a.Line == nil && a.TooLong == 0 {
					a.Death = c.death()
					mu.Lock()
					delete(live, c)
					mu.Unlock()
					c = nil
				}
				mu.Lock()
				answer(t, a)
				mu.Unlock()
			}
		}(k)
	}
	wg.Wait()
	close(stopped)
	return errors.Join(errs...)
}

type line struct {
	line    []byte
	tooLong int
}

type child struct {
	cmd            *exec.Cmd
	stdin          io.WriteCloser
	stdout, stderr io.Closer
	lines          chan line
	errDone        chan struct{}
	exited         chan struct{} // closed when the process has ended (state is set)
	state          *os.ProcessState
	crash          strings.Builder // the start of a Go crash report on the child's stderr
	mu             sync.Mutex
}

// answer waits for the child's next answer line; ok is false when the child
// ended without one. A process that ended is not waited on through its pipes
// (a process it started may still hold them).
func (c *child) answer() (line, bool) {
	select {
	case m, ok := <-c.lines:
		return m, ok
	case <-c.exited:
		select { // an answer written just before the end
		case m, ok := <-c.lines:
			return m, ok
		case <-time.After(time.Second):
			return line{}, false
		}
	}
}

func (p *Pool) start() (*child, error) {
	cmd := p.Command()
	if cmd.SysProcAttr == nil {
		cmd.SysProcAttr = &syscall.SysProcAttr{}
	}
	// A child whose parent dies (kill -9) is told to stop cleanly.
	cmd.SysProcAttr.Pdeathsig = syscall.SIGTERM
	c := &child{cmd: cmd, lines: make(chan line, 4), errDone: make(chan struct{}), exited: make(chan struct{})}
	var err error
	if c.stdin, err = cmd.StdinPipe(); err != nil {
		return nil, err
	}
	stdout, err := cmd.StdoutPipe()
	if err != nil {
		return nil, err
	}
	stderr, err := cmd.StderrPipe()
	if err != nil {
		return nil, err
	}
	if err := cmd.Start(); err != nil {
		return nil, err
	}
	c.stdout, c.stderr = stdout, stderr
	// The process is waited on directly, not through cmd.Wait, which would
	// also wait for the pipes to be closed by every process holding them.
	go func() {
		c.state, _ = cmd.Process.Wait()
		close(c.exited)
	}()
	go readLines(stdout, p.MaxAnswer, c.lines)
	go c.copyStderr(stderr, p.Stderr)
	return c, nil
}

// readLines sends every line of r, never keeping more than max bytes of one.
func readLines(r io.Reader, max int, out chan<- line) {
	defer close(out)
	br := bufio.NewReaderSize(r, 64<<10)
	for {
		var buf []byte
		n := 0
		for {
			frag, err := br.ReadSlice('\n')
			n += len(frag)
			if n <= max+1 {
				buf = append(buf, frag...)
			}
			if errors.Is(err, bufio.ErrBufferFull) {
				continue
			}
			if err != nil {
				return // a partial last line is no answer
			}
			break
		}
		if n > max+1 {
			out <- line{tooLong: n - 1}
		} else {
			out <- line{line: buf[:len(buf)-1]}
		}
	}
}

// crashStart matches the first line of a Go crash report (a signal in C code,
// a fatal runtime error, an unrecovered panic).
var crashStart = regexp.MustCompile(`^(SIG[A-Z]+: |fatal error: |panic: )`)

// copyStderr copies the child's messages to w, line by line, up to the start
// of a crash report, whose first lines are kept for death (the trace itself
// is not shown: the record says which file and which signal).
func (c *child) copyStderr(r io.Reader, w io.Writer) {
	defer close(c.errDone)
	br := bufio.NewReaderSize(r, 64<<10)
	crashed := false
	for {
		l, err := br.ReadSlice('\n')
		if len(l) > 0 {
			if !crashed && crashStart.Match(l) {
				crashed = true
			}
			if crashed {
				c.mu.Lock()
				if c.crash.Len() < 4096 {
					c.crash.Write(l[:min(len(l), 4096)])
				}
				c.mu.Unlock()
			} else {
				w.Write(l)
			}
		}
		if err != nil && !errors.Is(err, bufio.ErrBufferFull) {
			return
		}
	}
}

func (c *child) signal(s syscall.Signal) {
	if c.cmd.Process != nil {
		_ = c.cmd.Process.Signal(s)
	}
}

// finish tells the child that no task comes (it exits) and waits for it
// (SIGKILL after 30 s).
func (c *child) finish() {
	c.stdin.Close()
	select {
	case <-c.exited:
	case <-time.After(30 * time.Second):
		c.signal(syscall.SIGKILL)
		<-c.exited
	}
	c.release()
}

// release closes the parent's ends of the pipes once the readers are done, or
// after a second (a process the child started may keep them open).
func (c *child) release() {
	done := make(chan struct{})
	go func() {
		for range c.lines {
		}
		<-c.errDone
		close(done)
	}()
	select {
	case <-done:
	case <-time.After(time.Second):
		c.stdout.Close()
		c.stderr.Close()
		<-done
	}
	c.stdout.Close()
	c.stderr.Close()
}

var signalName = regexp.MustCompile(`\b(SIG[A-Z]+)\b`)

// death waits for a child that stopped answering and says how it ended.
func (c *child) death() *Death {
	c.stdin.Close()
	select { // should it still run (it closed its stdout): stop it
	case <-c.exited:
	case <-time.After(10 * time.Second):
		c.signal(syscall.SIGKILL)
		<-c.exited
	}
	c.release()
	d := &Death{ExitCode: -1}
	if c.state != nil {
		d.ExitCode = c.state.ExitCode()
	}
	c.mu.Lock()
	crash := c.crash.String()
	c.mu.Unlock()
	first, _, _ := strings.Cut(strings.TrimSpace(crash), "\n")
	if c.state != nil {
		if ws, ok := c.state.Sys().(syscall.WaitStatus); ok && ws.Signaled() {
			d.Signal = sigName(ws.Signal())
		}
	}
	if m := signalName.FindStringSubmatch(crash); d.Signal == "" && m != nil {
		d.Signal = m[1]
	}
	switch {
	case d.Signal == "SIGKILL":
		d.Message = "the worker process was killed (SIGKILL; the kernel's out-of-memory killer does this: see --memory-mb)"
	case d.Signal != "":
		what := ""
		if first != "" && !strings.HasPrefix(first, d.Signal) {
			what = " (" + first + ")"
		}
		d.Message = fmt.Sprintf("the worker process crashed with %s while working on this file%s; this file is likely damaged or of a kind the netCDF/HDF5 libraries cannot read; the other files were not affected", d.Signal, what)
	case first != "":
		d.Message = fmt.Sprintf("the worker process crashed while working on this file (%s); the other files were not affected", first)
	default:
		d.Message = fmt.Sprintf("the worker process ended without a result (%v)", c.state)
	}
	return d
}

func sigName(s syscall.Signal) string {
	names := map[syscall.Signal]string{syscall.SIGSEGV: "SIGSEGV", syscall.SIGABRT: "SIGABRT", syscall.SIGBUS: "SIGBUS",
		syscall.SIGKILL: "SIGKILL", syscall.SIGTERM: "SIGTERM", syscall.SIGINT: "SIGINT", syscall.SIGFPE: "SIGFPE",
		syscall.SIGILL: "SIGILL", syscall.SIGHUP: "SIGHUP", syscall.SIGPIPE: "SIGPIPE"}
	if n, ok := names[s]; ok {
		return n
	}
	return fmt.Sprintf("signal %d", int(s))
}

// ChildTasks reads the tasks of a child process from r (its stdin), one per
// line, until r ends.
func ChildTasks(r io.Reader) *bufio.Scanner {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 64<<10), 1<<20)
	return sc
}
