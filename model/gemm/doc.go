// Package gemm provides a faster pure-Go (Go plus Go assembly, no cgo)
// general matrix multiply for the default build of tidemark.
//
// Implementation embeds gonum's pure-Go BLAS (gonum.org/v1/gonum/blas/gonum)
// and replaces only its Dgemm and Sgemm. On amd64 CPUs with AVX2 and FMA
// (and an operating system that saves the YMM registers) the products run
// through a register-blocked micro-kernel written in assembly: 6×16 for
// float32 and 6×8 for float64, on 12 YMM accumulators with VFMADD231; on
// CPUs with AVX-512F (and its operating-system support) the same kernels
// on ZMM registers, 6×32 and 6×16. Kernels says which run. The
// driver follows the layered design of Goto and van de Geijn, "Anatomy of
// high-performance matrix multiplication", ACM Trans. Math. Softw. 34(3),
// 2008, in the form of Van Zee and van de Geijn's BLIS (ACM Trans. Math.
// Softw. 41(3), 2015): B is packed in blocks of kc rows into panels of nr
// columns (16 KiB each), each small enough for the L1 cache while a block of A
// streams through the micro-kernel from L2. A is not packed: the kernel
// reads it in place through its row and column strides (so all four
// transpose combinations need only B's packing), except for the last rows
// of a product whose count is not a multiple of 6, which are copied into a
// zero-padded tile. Tiles at the right and bottom edges are computed into
// a private buffer and added to C in Go. Pack buffers are reused through a
// sync.Pool, so a product allocates nothing in the steady state.
//
// The products are single-threaded: tidemark already runs one goroutine
// per thread and calls GEMM from each of them. (gonum's own Dgemm spreads
// large products over GOMAXPROCS goroutines.)
//
// Without AVX2 and FMA, on other architectures, and when built with the
// tag purego, Dgemm and Sgemm are gonum's own. Argument checks and their
// panic messages are gonum's in every case. Results differ from gonum's in
// the last bits, because the sums run in a different order and use fused
// multiply-adds.
package gemm
