package report

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"strings"
	"testing"
)

// Hand case checked on paper against DESIGN.md "Scoring definitions".
// Common practice, no source: the arithmetic below is the definition.
func TestEvaluateHandCase(t *testing.T) {
	cases := []Case{
		{Predicted: []int{0, 1, 2}, Gold: []int{0, 2}},
		{Predicted: []int{3}, Gold: []int{1, 3}}, // one prediction: two slots wrong at k=3
	}
	got := Evaluate(cases, []int{1, 3}, nil)
	want := map[string]Figure{
		// k=1: TP = 1 (0) + 1 (3) = 2; P = 2/(1·2); R = 2/4.
		"precision@1": {Micro: 1, Macro: (1.0 + 0 + 0 + 1) / 4},
		"recall@1":    {Micro: 0.5, Macro: (1.0 + 0 + 0 + 1) / 4},
		// k=3: TP = 2 + 1 = 3; P = 3/6; R = 3/4.
		// concepts with gold: 0 (tp1 pp1 gp1) 1 (tp0 pp1 gp1) 2 (tp1 pp1 gp1) 3 (tp1 pp1 gp1)
		"precision@3": {Micro: 0.5, Macro: 0.75},
		"recall@3":    {Micro: 0.75, Macro: 0.75},
		"f1@3":        {Micro: 2 * 0.5 * 0.75 / 1.25, Macro: 0.75},
	}
	for k, w := range want {
		g := got[k]
		if math.Abs(g.Micro-w.Micro) > 1e-12 || math.Abs(g.Macro-w.Macro) > 1e-12 {
			t.Errorf("%s = %+v, want %+v", k, g, w)
		}
	}
	// NDCG@3, record 1: hits at ranks 1 and 3: (1 + 1/log2 4)/(1 + 1/log2 3).
	// Record 2: hit at rank 1 of 2 gold: 1/(1 + 1/log2 3).
	n1 := (1 + 0.5) / (1 + 1/math.Log2(3))
	n2 := 1 / (1 + 1/math.Log2(3))
	if g := got["ndcg@3"].Micro; math.Abs(g-(n1+n2)/2) > 1e-12 {
		t.Errorf("ndcg@3 = %v, want %v", g, (n1+n2)/2)
	}
}

// Source: Kiritchenko, Matwin, Nock & Famili (2006), "Learning and
// evaluation in the presence of class hierarchies", definitions of hP, hR,
// hF. The tree and sets below are ours (from memory the paper's own figure
// uses a similar small tree); the expected values follow the definitions:
// the root is not counted, each set is extended with its ancestors.
//
//	  A       B
//	 / \      |
//	C   D     E
//	|
//	F
func TestHierarchicalWorkedExample(t *testing.T) {
	const A, B, C, D, E, F = 0, 1, 2, 3, 4, 5
	parents := map[int][]int{C: {A}, D: {A}, E: {B}, F: {C, A}}
	anc := func(l int) []int { return parents[l] }
	// Gold {F} → {F, C, A}; predicted {D} → {D, A}: overlap {A}.
	// hP = 1/2, hR = 1/3, hF = 2·(1/2)(1/3)/(5/6) = 0.4.
	got := Evaluate([]Case{{Predicted: []int{D}, Gold: []int{F}}}, []int{1}, anc)
	check := func(name string, want float64) {
		if g := got[name].Micro; math.Abs(g-want) > 1e-12 {
			t.Errorf("%s = %v, want %v", name, g, want)
		}
	}
	check("hprecision@1", 0.5)
	check("hrecall@1", 1.0/3)
	check("hf1@1", 0.4)
	check("precision@1", 0)
	// A sibling of the truth earns partial credit; an unrelated branch none.
	got = Evaluate([]Case{{Predicted: []int{E}, Gold: []int{F}}}, []int{1}, anc)
	check("hprecision@1", 0)
}

func TestBestThreshold(t *testing.T) {
	// Common practice, no source: sweep the cut over the sorted scores.
	cases := []Case{
		{Predicted: []int{1, 2, 3}, Scores: []float64{0.6, 0.3, 0.1}, Gold: []int{1, 2}},
		{Predicted: []int{4, 5}, Scores: []float64{0.5, 0.05}, Gold: []int{4}},
	}
	th, f1 := BestThreshold(cases)
	// Cut at 0.3 keeps 1, 4, 2: TP 3 of 3 predicted, 3 gold → F1 = 1.
	if th != 0.3 || math.Abs(f1-1) > 1e-12 {
		t.Fatalf("BestThreshold = %v, %v; want 0.3, 1", th, f1)
	}
}

// Source: scikit-learn (Debian python3-sklearn) precision_recall_fscore_support
// and ndcg_score, run on random multi-label cases. Skipped when Debian's
// python3 has no sklearn (CI installs it).
func TestEvaluateAgainstSklearn(t *testing.T) {
	py := "/usr/bin/python3"
	if err := exec.Command(py, "-c", "import sklearn").Run(); err != nil {
		t.Skip("Debian python3-sklearn not installed (apt-get install python3-sklearn): skipping the scikit-learn comparison")
	}
	rng := rand.New(rand.NewPCG(7, 11))
	const L, N = 12, 60
	type pyCase struct {
		Pred   [][]int     `json:"pred"`
		Scores [][]float64 `json:"scores"`
		Gold   [][]int     `json:"gold"`
		K      []int       `json:"k"`
	}
	for trial := 0; trial < 3; trial++ {
		var cases []Case
		var in pyCase
		in.K = Ks
		for d := 0; d < N; d++ {
			perm := rng.Perm(L)
			gold := append([]int(nil), perm[:1+rng.IntN(4)]...)
			// Every record ranks all L labels, so "missing slots" never
			// arise and sklearn's micro precision equals ours.
			pred := rng.Perm(L)
			scores := make([]float64, L)
			for i := range pred {
				scores[i] = float64(L-i) + rng.Float64()*0.5
			}
			cases = append(cases, Case{Predicted: pred, Scores: scores, Gold: gold})
			in.Pred = append(in.Pred, pred)
			in.Scores = append(in.Scores, scores)
			in.Gold = append(in.Gold, gold)
		}
		js, _ := json.Marshal(in)
		script := `
import json, sys
import numpy as np
from sklearn.metrics import precision_recall_fscore_support, ndcg_score
c = json.load(sys.stdin)
L = 12
N = len(c["gold"])
Y = np.zeros((N, L), dtype=int)
for d, g in enumerate(c["gold"]):
    Y[d, g] = 1
S = np.zeros((N, L))
for d, (p, s) in enumerate(zip(c["pred"], c["scores"])):
    S[d, p] = s
labels = [l for l in range(L) if Y[:, l].sum() > 0]
out = {}
for k in c["k"]:
    P = np.zeros((N, L), dtype=int)
    for d, p in enumerate(c["pred"]):
        P[d, p[:k]] = 1
    for avg in ("micro", "macro"):
        p, r, f, _ = precision_recall_fscore_support(Y, P, average=avg, labels=labels if avg == "macro" else None, zero_division=0)
        out["precision@%d/%s" % (k, avg)] = p
        out["recall@%d/%s" % (k, avg)] = r
        out["f1@%d/%s" % (k, avg)] = f
    out["ndcg@%d/micro" % k] = ndcg_score(Y, S, k=k)
print(json.dumps(out))
`
		cmd := exec.Command(py, "-c", script)
		cmd.Stdin = strings.NewReader(string(js))
		cmd.Stderr = os.Stderr
		raw, err := cmd.Output()
		if err != nil {
			t.Fatalf("python: %v", err)
		}
		var ref map[string]float64
		if err := json.Unmarshal(raw, &ref); err != nil {
			t.Fatalf("python output %q: %v", raw, err)
		}
		got := Evaluate(cases, Ks, nil)
		for name, want := range ref {
			metric, avg, _ := strings.Cut(name, "/")
			g := got[metric].Micro
			if avg == "macro" {
				g = got[metric].Macro
			}
			if math.Abs(g-want) > 1e-9 {
				t.Errorf("trial %d %s: termgrove %v, sklearn %v", trial, name, g, want)
			}
		}
	}
}
