package fit

// logLik is the joint log p(w, z) of the training tokens under the current
// assignments, with θ and φ integrated out (Griffiths & Steyvers 2004, eq. 2
// and 3, with asymmetric α, per-topic β rows and restricted records):
//
//	Σ_d [lnΓ(α_A) − lnΓ(n_d+α_A) + Σ_k lnΓ(n_dk+α_k) − lnΓ(α_k)]
//	+ Σ_k [lnΓ(B_k) − lnΓ(n_k+B_k) + Σ_w lnΓ(n_kw+β_kw) − lnΓ(β_kw)]
//
// It reads the shared counts, so call it between sweeps.
func (st *state) logLik() float64 {
	var ll float64
	// Record part.
	var a0, aFree float64
	lgA := make([]float64, st.K)
	for k, a := range st.alpha {
		a0 += a
		if k >= st.C {
			aFree += a
		}
		lgA[k] = Lgamma(a)
	}
	ndk := make([]int32, st.K)
	var seen []int32
	for di := range st.docs {
		d := &st.docs[di]
		aA := a0
		if d.subjects != nil {
			aA = aFree
			for _, k := range d.subjects {
				aA += st.alpha[k]
			}
		}
		ll += Lgamma(aA) - Lgamma(float64(d.end-d.start)+aA)
		for i := d.start; i < d.end; i++ {
			k := st.z[i]
			if ndk[k] == 0 {
				seen = append(seen, k)
			}
			ndk[k]++
		}
		for _, k := range seen {
			ll += Lgamma(float64(ndk[k])+st.alpha[k]) - lgA[k]
			ndk[k] = 0
		}
		seen = seen[:0]
	}
	// Topic part.
	for k := 0; k < st.K; k++ {
		ll += Lgamma(st.B[k]) - Lgamma(float64(st.nk[k])+st.B[k])
	}
	lgB0 := Lgamma(st.beta0)
	for w := range st.wt {
		for _, e := range st.wt[w] {
			b := st.beta0 + st.priorMass(e.k, int32(w))
			lgb := lgB0
			if b != st.beta0 {
				lgb = Lgamma(b)
			}
			ll += Lgamma(float64(e.n)+b) - lgb
		}
	}
	return ll
}
