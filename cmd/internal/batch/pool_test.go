package batch

import (
	"context"
	"os/exec"
	"strings"
	"sync"
	"testing"
	"time"
)

// TestPool runs tasks in /bin/sh workers: a task "crash" kills its worker
// with SIGSEGV (that task alone fails, with the signal; a new worker takes
// the rest), a task "huge" answers with 1 MiB (dropped, reported TooLong, the
// worker is not blocked), the others are echoed.
func TestPool(t *testing.T) {
	sh, err := exec.LookPath("sh")
	if err != nil {
		t.Skip("no sh")
	}
	script := `while read task; do
  case "$task" in
    crash) kill -SEGV $$ ;;
    huge) head -c 1048576 /dev/zero | tr '\0' x; echo ;;
    *) echo "done $task" ;;
  esac
done`
	var tasks []string
	for i := 0; i < 12; i++ {
		tasks = append(tasks, "t"+string(rune('a'+i)))
	}
	tasks[3], tasks[8] = "crash", "huge"
	var stderr strings.Builder
	p := Pool{Jobs: 2, Stderr: &stderr, MaxAnswer: 4096, Grace: 5 * time.Second,
		Command: func() *exec.Cmd { return exec.Command(sh, "-c", script) }}
	var mu sync.Mutex
	got := map[int]Answer{}
	err = p.Run(context.Background(), tasks, func(k int, a Answer) {
		mu.Lock()
		got[k] = a
		mu.Unlock()
	})
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != len(tasks) {
		t.Fatalf("%d answers for %d tasks", len(got), len(tasks))
	}
	for k, task := range tasks {
		a := got[k]
		switch task {
		case "crash":
			if a.Death == nil || a.Death.Signal != "SIGSEGV" || !strings.Contains(a.Death.Message, "SIGSEGV") {
				t.Errorf("crash: %+v %+v", a, a.Death)
			}
		case "huge":
			if a.TooLong != 1<<20 || a.Line != nil {
				t.Errorf("huge: TooLong %d, %d bytes", a.TooLong, len(a.Line))
			}
		default:
			if string(a.Line) != "done "+task {
				t.Errorf("%s: %q %+v", task, a.Line, a.Death)
			}
		}
	}
}

// TestPoolCancel: a cancel stops workers that ignore SIGTERM (SIGKILL after
// the grace time) and Run returns.
func TestPoolCancel(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	sh, err := exec.LookPath("sh")
	if err != nil {
		t.Skip("no sh")
	}
	ctx, cancel := context.WithCancel(context.Background())
	p := Pool{Jobs: 1, Stderr: &strings.Builder{}, MaxAnswer: 4096, Grace: 200 * time.Millisecond,
		Command: func() *exec.Cmd { return exec.Command(sh, "-c", `trap '' TERM; read task; sleep 60`) }}
	done := make(chan struct{})
	var answers []Answer
	go func() {
		p.Run(ctx, []string{"a", "b"}, func(k int, a Answer) { answers = append(answers, a) })
		close(done)
	}()
	time.Sleep(100 * time.Millisecond)
	cancel()
	select {
	case <-done:
	case <-time.After(30 * time.Second):
		t.Fatal("Run did not return after a cancel")
	}
	if len(answers) != 1 || answers[0].Death == nil || answers[0].Death.Signal != "SIGKILL" {
		t.Fatalf("answers %+v", answers)
	}
}
