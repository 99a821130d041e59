package gemm

import (
	"sync"
	"unsafe"
)

// kernelFunc computes the mr×nr tile
//
//	C[i][j] = alpha·Σ_p A(i,p)·Bp[p·nr+j] + beta·C[i][j]   (i < mr, j < nr, p < k)
//
// where A(i,p) is a[i·rsa + p·csa], Bp a packed panel of B (k rows of nr
// contiguous entries), and row i of C starts at c[i·ldc]. With load = 0 the
// beta term is left out and C is not read. k ≥ 1.
type kernelFunc[T float32 | float64] func(k int, a *T, rsa, csa int, b, c *T, ldc int, alpha, beta T, load int)

// config is one precision's micro-kernel and cache blocking: kc rows of B
// per packed block (the inner dimension of one pass), mc rows of A per
// block, nc columns of B per block; mr×nr is the kernel's tile.
type config[T float32 | float64] struct {
	mr, nr     int
	kc, mc, nc int
	kernel     kernelFunc[T]
	pool       sync.Pool
}

// buffers are one product's private work space: the packed block of B,
// the zero-padded copy of A's last rows, and an edge tile.
type buffers[T float32 | float64] struct {
	b, a, tile []T
}

func (cf *config[T]) get(kc, nc int) *buffers[T] {
	bf, _ := cf.pool.Get().(*buffers[T])
	if bf == nil {
		bf = new(buffers[T])
	}
	nb := kc * ((nc + cf.nr - 1) / cf.nr * cf.nr)
	if cap(bf.b) < nb {
		bf.b = make([]T, nb)
	}
	bf.b = bf.b[:cap(bf.b)]
	if len(bf.a) < cf.mr*cf.kc {
		bf.a = make([]T, cf.mr*cf.kc)
	}
	if len(bf.tile) < cf.mr*cf.nr {
		bf.tile = make([]T, cf.mr*cf.nr)
	}
	return bf
}

// gemm computes C = alpha·op(A)·op(B) + beta·C (arguments checked, m, n ≥ 1)
// with the configuration's kernel.
func gemm[T float32 | float64](cf *config[T], aT, bT bool, m, n, k int, alpha T, a []T, lda int, b []T, ldb int, beta T, c []T, ldc int) {
	if alpha == 0 || k == 0 {
		scale(m, n, beta, c, ldc)
		return
	}
	// A(i,p) of op(A) is a[i·rsa + p·csa].
	rsa, csa := lda, 1
	if aT {
		rsa, csa = 1, lda
	}
	kcMax, ncMax := min(cf.kc, k), min(cf.nc, n)
	bf := cf.get(kcMax, ncMax)
	for jc := 0; jc < n; jc += cf.nc {
		nc := min(cf.nc, n-jc)
		for pc := 0; pc < k; pc += cf.kc {
			kc := min(cf.kc, k-pc)
			packB(bf.b, b, ldb, bT, pc, jc, kc, nc, cf.nr)
			be, load := beta, 1
			if pc > 0 {
				be = 1
			} else if beta == 0 {
				load = 0
			}
			for ic := 0; ic < m; ic += cf.mc {
				mc := min(cf.mc, m-ic)
				cf.block(bf, mc, nc, kc, alpha, a, ic*rsa+pc*csa, rsa, csa, be, load, c[ic*ldc+jc:], ldc)
			}
		}
	}
	cf.pool.Put(bf)
}

// block multiplies the mc×kc block of A starting at a[off] by the packed
// kc×nc block of B into the mc×nc block of C starting at c[0].
func (cf *config[T]) block(bf *buffers[T], mc, nc, kc int, alpha T, a []T, off, rsa, csa int, beta T, load int, c []T, ldc int) {
	mr, nr := cf.mr, cf.nr
	mFull := mc / mr * mr
	var aEdge *T
	if mFull < mc {
		// The last mc−mFull rows, zero-padded to mr, as A(i,p) = ae[p·mr+i].
		ae := bf.a[:mr*kc]
		clear(ae)
		for i := mFull; i < mc; i++ {
			row := off + i*rsa
			for p := range kc {
				ae[p*mr+i-mFull] = a[row+p*csa]
			}
		}
		aEdge = &ae[0]
	}
	tile := bf.tile[:mr*nr]
	for jr := 0; jr < nc; jr += nr {
		nrc := min(nr, nc-jr)
		bp := &bf.b[jr*kc]
		if nrc == nr {
			for ir := 0; ir < mFull; ir += mr {
				cf.kernel(kc, &a[off+ir*rsa], rsa, csa, bp, &c[ir*ldc+jr], ldc, alpha, beta, load)
			}
		} else {
			for ir := 0; ir < mFull; ir += mr {
				cf.kernel(kc, &a[off+ir*rsa], rsa, csa, bp, &tile[0], nr, 1, 0, 0)
				addTile(tile, nr, mr, nrc, alpha, beta, load, c[ir*ldc+jr:], ldc)
			}
		}
		if aEdge != nil {
			cf.kernel(kc, aEdge, 1, mr, bp, &tile[0], nr, 1, 0, 0)
			addTile(tile, nr, mc-mFull, nrc, alpha, beta, load, c[mFull*ldc+jr:], ldc)
		}
	}
}

// addTile writes C = alpha·T + beta·C (or alpha·T with load = 0) for the
// top-left rows×cols of the tile T, whose rows are nr apart.
func addTile[T float32 | float64](t []T, nr, rows, cols int, alpha, beta T, load int, c []T, ldc int) {
	for i := range rows {
		ti, ci := t[i*nr:i*nr+cols], c[i*ldc:i*ldc+cols]
		if load == 0 {
			for j, v := range ti {
				ci[j] = alpha * v
			}
			continue
		}
		for j, v := range ti {
			ci[j] = alpha*v + beta*ci[j]
		}
	}
}

// packB copies the kc×nc block of op(B) starting at row pc, column jc into
// dst as panels of nr columns: panel q holds op(B)(pc+p, jc+q·nr+j) at
// dst[q·nr·kc + p·nr + j], zero beyond column nc.
func packB[T float32 | float64](dst, b []T, ldb int, bT bool, pc, jc, kc, nc, nr int) {
	full := nc / nr * nr
	if !bT {
		// op(B)(p, j) = b[p·ldb + j]: rows are contiguous. With the
		// assembly, all full panels (rows of 64 or 128 bytes) are one call.
		sz := int(unsafe.Sizeof(dst[0]))
		j0 := 0
		if useAsm && (nr*sz == 64 || nr*sz == 128) && full > 0 {
			first := pc*ldb + jc
			_ = b[first+(kc-1)*ldb+full-1] // the panels lie inside b
			_ = dst[full*kc-1]
			copyPanels(unsafe.Pointer(&dst[0]), unsafe.Pointer(&b[first]), kc, ldb*sz, full/nr, nr*sz)
			j0 = full
		}
		for ; j0 < nc; j0 += nr {
			w := min(nr, nc-j0)
			d := dst[j0*kc : j0*kc+nr*kc]
			for p := range kc {
				row := d[p*nr : p*nr+nr]
				copy(row[:w], b[(pc+p)*ldb+jc+j0:])
				clear(row[w:])
			}
		}
		return
	}
	// op(B)(p, j) = b[j·ldb + p]: columns are contiguous. With the
	// assembly, full panels are transposed 4×4 at a time for the first
	// kc&^3 rows; the rest in Go.
	sz := int(unsafe.Sizeof(dst[0]))
	k4 := 0
	if useAsm && nr%4 == 0 {
		k4 = kc &^ 3
	}
	for j0 := 0; j0 < nc; j0 += nr {
		w := min(nr, nc-j0)
		d := dst[j0*kc : j0*kc+nr*kc]
		p0 := 0
		if w < nr {
			clear(d)
		} else if k4 > 0 {
			first := (jc+j0)*ldb + pc
			_ = b[first+(nr-1)*ldb+k4-1] // the panel lies inside b
			if sz == 8 {
				transD(unsafe.Pointer(&d[0]), unsafe.Pointer(&b[first]), k4, ldb*sz, nr)
			} else {
				transS(unsafe.Pointer(&d[0]), unsafe.Pointer(&b[first]), k4, ldb*sz, nr)
			}
			p0 = k4
		}
		for j := range w {
			col := b[(jc+j0+j)*ldb+pc:]
			col = col[p0:kc]
			for p, v := range col {
				d[(p0+p)*nr+j] = v
			}
		}
	}
}

// scale sets C = beta·C, writing zeros without reading C when beta = 0.
func scale[T float32 | float64](m, n int, beta T, c []T, ldc int) {
	if beta == 1 {
		return
	}
	for i := range m {
		ci := c[i*ldc : i*ldc+n]
		if beta == 0 {
			clear(ci)
			continue
		}
		for j := range ci {
			ci[j] *= beta
		}
	}
}

// goKernel is the micro-kernel in plain Go, with the semantics of
// kernelFunc, for an mr×nr tile; the tests run the driver on it to check
// the blocking and packing apart from the assembly.
func goKernel[T float32 | float64](mr, nr int) kernelFunc[T] {
	return func(k int, a *T, rsa, csa int, b, c *T, ldc int, alpha, beta T, load int) {
		acc := make([]T, mr*nr)
		sz := unsafe.Sizeof(*a)
		at := func(p *T, i int) *T { return (*T)(unsafe.Add(unsafe.Pointer(p), uintptr(i)*sz)) }
		for p := range k {
			for i := range mr {
				ai := *at(a, i*rsa+p*csa)
				for j := range nr {
					acc[i*nr+j] += ai * *at(b, p*nr+j)
				}
			}
		}
		for i := range mr {
			for j := range nr {
				ci := at(c, i*ldc+j)
				if load == 0 {
					*ci = alpha * acc[i*nr+j]
				} else {
					*ci = alpha*acc[i*nr+j] + beta**ci
				}
			}
		}
	}
}
