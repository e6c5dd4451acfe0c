//! Every eigenvalue, and the eigenvectors of only the lowest levels, of a real symmetric
//! matrix, in a workspace allocated once.
//!
//! The tight-binding forces need eigenvectors only for the levels that hold electrons, about half
//! of them. A full symmetric eigensolver spends much of its time on the other half (the
//! eigenvectors of the tridiagonal matrix and their back-transformation), so [`Eigensolver`]
//! runs the classical steps itself (Golub & Van Loan, *Matrix Computations*, 4th ed. 2013,
//! §8.3-8.4) and stops each at what is needed:
//! 1. Householder tridiagonalisation QᵀAQ = T, in place (faer);
//! 2. T split where an off-diagonal entry is negligible, and every eigenvalue of each piece by
//!    the square-root-free QR algorithm of Pal, Walker and Kahan (as in LAPACK's `dsterf`;
//!    Parlett, *The Symmetric Eigenvalue Problem*, SIAM 1998, §8.15), merged in ascending order;
//! 3. eigenvectors of T for the lowest `count` levels only, by inverse iteration with a
//!    pivoted LU factorisation of T − λI and modified Gram-Schmidt inside clusters of close
//!    levels (Peters & Wilkinson, "The calculation of specified eigenvectors by inverse
//!    iteration", Handbook for Automatic Computation II (1971) contribution II/18; the scheme
//!    of LAPACK's `dstein`, Anderson et al., *LAPACK Users' Guide*, 3rd ed., SIAM 1999);
//! 4. back-transformation Qz of those vectors only (faer's blocked Householder products).
//!
//! If inverse iteration does not converge for some level, all eigenvectors of T are computed
//! with faer's divide and conquer instead, so a result is always an eigendecomposition to
//! working accuracy. Each step is sequential unless a parallel [`Par`] is set, and the starting
//! vectors of inverse iteration are fixed pseudo-random numbers, so results are bit-identical
//! from run to run. This module knows nothing about orbitals or electrons: choosing `count` is
//! left to the caller (`model.rs` with `occupation.rs`).

use faer::dyn_stack::{MemBuffer, MemStack, StackReq};
use faer::linalg::evd::{self, tridiag, ComputeEigenvectors};
use faer::linalg::householder;
use faer::reborrow::{Reborrow, ReborrowMut};
use faer::{ColMut, ColRef, Conj, Mat, MatMut, MatRef, Par};

/// Inverse iterations allowed per vector, and extra iterations once the growth test passes
/// (LAPACK's `dstein` uses the same 5 and 2).
const MAX_ITERATIONS: usize = 5;
const EXTRA_ITERATIONS: usize = 1;

/// Levels closer than this fraction of ‖T‖₁ are one cluster whose vectors are orthogonalised
/// against each other (`dstein`'s 10⁻³).
const CLUSTER_TOL: f64 = 1e-3;

/// A workspace for one matrix size: every buffer is allocated in [`Eigensolver::new`] (or when a
/// parallel setting needs a larger faer stack), so solving allocates nothing.
pub struct Eigensolver {
    dim: usize,
    par: Par,
    /// Householder coefficients of the tridiagonalisation, in faer's blocked layout.
    householder: Mat<f64>,
    scratch: MemBuffer,
    /// T's diagonal and off-diagonal (`off[i]` = T[i+1, i]; the last entry is 0).
    diag: Vec<f64>,
    off: Vec<f64>,
    /// Start of each unreduced block of T, then `dim`.
    block_starts: Vec<usize>,
    /// Eigenvalues of each block, ascending within the block, at the block's rows.
    block_levels: Vec<f64>,
    /// Working copy of `off` for the eigenvalue iteration.
    squares: Vec<f64>,
    /// All eigenvalues ascending, each with the index of its block.
    sorted: Vec<(f64, usize)>,
    inverse: InverseIteration,
}

impl std::fmt::Debug for Eigensolver {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Eigensolver")
            .field("dim", &self.dim)
            .finish_non_exhaustive()
    }
}

/// Why the eigenvalues or eigenvectors could not be computed.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SpectrumError {
    /// The matrix has an entry that is NaN or infinite.
    NotFinite,
    /// faer's QR or divide-and-conquer iteration did not converge.
    NoConvergence,
}

impl Eigensolver {
    /// A workspace for `dim`-square matrices, solving sequentially.
    pub fn new(dim: usize) -> Eigensolver {
        let block = block_size(dim);
        Eigensolver {
            dim,
            par: Par::Seq,
            householder: Mat::zeros(block, dim.saturating_sub(1)),
            scratch: MemBuffer::new(scratch_for(dim, Par::Seq)),
            diag: vec![0.0; dim],
            off: vec![0.0; dim],
            block_starts: Vec::with_capacity(dim + 1),
            block_levels: vec![0.0; dim],
            squares: vec![0.0; dim],
            sorted: vec![(0.0, 0); dim],
            inverse: InverseIteration::new(dim),
        }
    }

    /// Matrix size this workspace was built for.
    pub fn dim(&self) -> usize {
        self.dim
    }

    /// Runs the tridiagonalisation and back-transformation with `par` (the other steps are
    /// sequential). A parallel setting may change the last bits of the results.
    pub fn set_par(&mut self, par: Par) {
        self.par = par;
        let needed = scratch_for(self.dim, par);
        if !MemStack::new(&mut self.scratch).can_hold(needed) {
            self.scratch = MemBuffer::new(needed);
        }
    }

    /// Every eigenvalue of the symmetric matrix whose lower triangle is in `a`, ascending, into
    /// `levels`. `a` is overwritten (it then holds the Householder vectors that
    /// [`Self::lowest_vectors`] needs, so it must not change in between).
    pub fn levels(&mut self, a: MatMut<'_, f64>, levels: &mut [f64]) -> Result<(), SpectrumError> {
        let n = self.dim;
        assert!(a.nrows() == n && a.ncols() == n && levels.len() == n);
        if n == 0 {
            return Ok(());
        }
        let mut a = a;
        let finite = (0..n).all(|j| {
            a.rb()
                .col(j)
                .subrows(j, n - j)
                .iter()
                .all(|v| v.is_finite())
        });
        if !finite {
            return Err(SpectrumError::NotFinite);
        }
        tridiag::tridiag_in_place(
            a.rb_mut(),
            self.householder.as_mut(),
            self.par,
            MemStack::new(&mut self.scratch),
            Default::default(),
        );
        for i in 0..n {
            self.diag[i] = a[(i, i)];
            self.off[i] = if i + 1 < n { a[(i + 1, i)] } else { 0.0 };
        }
        self.split();
        for b in 0..self.block_starts.len() - 1 {
            let (start, end) = (self.block_starts[b], self.block_starts[b + 1]);
            let levels = &mut self.block_levels[start..end];
            levels.copy_from_slice(&self.diag[start..end]);
            self.squares[start..end - 1].copy_from_slice(&self.off[start..end - 1]);
            if !root_free_qr(levels, &mut self.squares[start..end - 1]) {
                return Err(SpectrumError::NoConvergence);
            }
            levels.sort_unstable_by(f64::total_cmp);
            for k in start..end {
                self.sorted[k] = (self.block_levels[k], b);
            }
        }
        // A total order, so the merge does not depend on the sort's treatment of ties.
        self.sorted
            .sort_unstable_by(|x, y| x.0.total_cmp(&y.0).then(x.1.cmp(&y.1)));
        for (level, &(value, _)) in levels.iter_mut().zip(&self.sorted) {
            *level = value;
        }
        Ok(())
    }

    /// After [`Self::levels`] on `a`, the orthonormal eigenvectors of the lowest `count` levels
    /// into the first `count` columns of `vectors` (column k belongs to level k). `count` should
    /// end at a gap in the spectrum (a whole degenerate level or none of it): only then is the
    /// span of the columns defined.
    pub fn lowest_vectors(
        &mut self,
        a: MatMut<'_, f64>,
        count: usize,
        vectors: MatMut<'_, f64>,
    ) -> Result<(), SpectrumError> {
        let n = self.dim;
        assert!(vectors.nrows() == n && vectors.ncols() >= count && count <= n);
        if count == 0 {
            return Ok(());
        }
        let mut vectors = vectors;
        let converged = (0..self.block_starts.len() - 1)
            .all(|b| self.block_vectors(b, count, vectors.rb_mut()));
        if !converged {
            self.all_vectors(vectors.rb_mut())?;
        }
        self.back_transform(a, count, vectors);
        Ok(())
    }

    /// Fills `block_starts` with the unreduced blocks of T: an off-diagonal entry no larger
    /// than ε (|T_ii| + |T_i+1,i+1|) is set to zero, which moves the eigenvalues by less than
    /// the tridiagonalisation's own rounding (ε‖A‖).
    fn split(&mut self) {
        self.block_starts.clear();
        self.block_starts.push(0);
        let n = self.dim;
        for i in 0..n - 1 {
            let scale = self.diag[i].abs() + self.diag[i + 1].abs();
            if self.off[i].abs() <= f64::EPSILON * scale {
                self.off[i] = 0.0;
                self.block_starts.push(i + 1);
            }
        }
        self.block_starts.push(n);
    }

    /// Inverse iteration for the levels of block `b` among the lowest `count`; false if some
    /// vector did not converge.
    fn block_vectors(&mut self, b: usize, count: usize, vectors: MatMut<'_, f64>) -> bool {
        let (start, end) = (self.block_starts[b], self.block_starts[b + 1]);
        let inverse = &mut self.inverse;
        inverse.begin_block(&self.diag[start..end], &self.off[start..end]);
        let mut local = 0;
        for (column, &(_, block)) in self.sorted[..count].iter().enumerate() {
            if block == b {
                inverse.add_level(self.block_levels[start + local], column);
                local += 1;
            }
        }
        inverse.run(start, vectors)
    }

    /// Every eigenvector of T (faer's divide and conquer) into `vectors`, the fallback when
    /// inverse iteration does not converge.
    fn all_vectors(&mut self, vectors: MatMut<'_, f64>) -> Result<(), SpectrumError> {
        let n = self.dim;
        evd::tridiagonal_self_adjoint_evd(
            ColRef::from_slice(&self.diag).as_diagonal(),
            ColRef::from_slice(&self.off[..n - 1]).as_diagonal(),
            ColMut::from_slice_mut(&mut self.block_levels).as_diagonal_mut(),
            Some(vectors),
            self.par,
            MemStack::new(&mut self.scratch),
            Default::default(),
        )
        .map_err(|_| SpectrumError::NoConvergence)
    }

    /// Forces the divide-and-conquer fallback for the lowest `count` vectors (for tests that
    /// compare both paths).
    #[doc(hidden)]
    pub fn lowest_vectors_by_divide_and_conquer(
        &mut self,
        a: MatMut<'_, f64>,
        count: usize,
        vectors: MatMut<'_, f64>,
    ) -> Result<(), SpectrumError> {
        let mut vectors = vectors;
        self.all_vectors(vectors.rb_mut())?;
        self.back_transform(a, count, vectors);
        Ok(())
    }

    /// The first `count` eigenvectors of T in `vectors` turned into those of A, with the
    /// Householder reflectors of the tridiagonalisation stored in `a`.
    fn back_transform(&mut self, a: MatMut<'_, f64>, count: usize, vectors: MatMut<'_, f64>) {
        let n = self.dim;
        householder::apply_block_householder_sequence_on_the_left_in_place_with_conj(
            a.rb().submatrix(1, 0, n - 1, n - 1),
            self.householder.as_ref(),
            Conj::No,
            vectors.submatrix_mut(1, 0, n - 1, count),
            self.par,
            MemStack::new(&mut self.scratch),
        );
    }
}

/// faer's block size for the Householder factor of an `n`-square tridiagonalisation (the one
/// its own symmetric eigensolver uses).
fn block_size(n: usize) -> usize {
    faer::linalg::qr::no_pivoting::factor::recommended_block_size::<f64>(n, n).max(1)
}

/// faer's stack for a full symmetric eigendecomposition of a `dim`-square matrix: it covers the
/// tridiagonalisation, the eigenvalue-only QR of any block, the divide-and-conquer fallback and
/// the back-transformation of up to `dim` vectors.
fn scratch_for(dim: usize, par: Par) -> StackReq {
    evd::self_adjoint_evd_scratch::<f64>(dim, ComputeEigenvectors::Yes, par, Default::default())
}

/// Vectors computed side by side: inverse iteration is a chain of dependent divisions and
/// multiply-adds, so four independent chains in one loop run about as fast as one.
const LANES: usize = 4;

/// One wanted level of a block: its column in the output, its shift and its cluster.
#[derive(Debug, Clone, Copy)]
struct Task {
    column: usize,
    shift: f64,
    cluster: usize,
}

/// Inverse iteration on one unreduced block of T: the pivoted LU of T − λI (after LAPACK's
/// `dlagtf`) and its solve, for up to [`LANES`] shifts at once (one per lane), each from a
/// different cluster so that the lanes never need each other's vectors.
struct InverseIteration {
    /// The block's diagonal and off-diagonal.
    d: Vec<f64>,
    e: Vec<f64>,
    /// Per row and lane: U's diagonal, and its two superdiagonals divided by the diagonal; the
    /// reciprocal of the diagonal; L's multipliers; whether rows k and k+1 were swapped.
    u0: Vec<[f64; LANES]>,
    u1: Vec<[f64; LANES]>,
    u2: Vec<[f64; LANES]>,
    inverse_pivot: Vec<[f64; LANES]>,
    mult: Vec<[f64; LANES]>,
    swapped: Vec<[bool; LANES]>,
    x: Vec<[f64; LANES]>,
    /// The fixed starting vector.
    start: Vec<f64>,
    tasks: Vec<Task>,
    /// Per cluster (a run of consecutive tasks): its first task, the next to run, and the end.
    cluster_first: Vec<usize>,
    cursor: Vec<usize>,
    cluster_end: Vec<usize>,
    norm: f64,
}

impl InverseIteration {
    fn new(dim: usize) -> InverseIteration {
        let lanes = || vec![[0.0; LANES]; dim];
        let mut start = vec![0.0; dim];
        starting_vector(&mut start);
        InverseIteration {
            d: Vec::with_capacity(dim),
            e: Vec::with_capacity(dim),
            u0: lanes(),
            u1: lanes(),
            u2: lanes(),
            inverse_pivot: lanes(),
            mult: lanes(),
            swapped: vec![[false; LANES]; dim],
            x: lanes(),
            start,
            tasks: Vec::with_capacity(dim),
            cluster_first: Vec::with_capacity(dim),
            cursor: Vec::with_capacity(dim),
            cluster_end: Vec::with_capacity(dim),
            norm: 0.0,
        }
    }

    /// Starts a block with diagonal `d` and off-diagonal `e` (one longer than needed; the last
    /// entry is ignored).
    fn begin_block(&mut self, d: &[f64], e: &[f64]) {
        self.d.clear();
        self.d.extend_from_slice(d);
        self.e.clear();
        self.e.extend_from_slice(&e[..d.len() - 1]);
        let s = d.len();
        self.norm = (0..s)
            .map(|i| {
                let left = if i > 0 { self.e[i - 1].abs() } else { 0.0 };
                let right = if i + 1 < s { self.e[i].abs() } else { 0.0 };
                d[i].abs() + left + right
            })
            .fold(0.0, f64::max);
        self.tasks.clear();
        self.cluster_first.clear();
        self.cursor.clear();
        self.cluster_end.clear();
    }

    /// Adds the next level of the block (ascending) whose vector goes to column `column`. As in
    /// `dstein`, close levels get shifts at least 10ε‖T‖ apart so that each factorisation
    /// differs, and a level within [`CLUSTER_TOL`]‖T‖ of the previous one joins its cluster.
    fn add_level(&mut self, level: f64, column: usize) {
        let mut shift = level;
        let mut cluster = 0;
        if let Some(previous) = self.tasks.last() {
            let separation = 10.0 * f64::EPSILON * level.abs().max(self.norm);
            shift = shift.max(previous.shift + separation);
            cluster = previous.cluster;
            if shift - previous.shift > CLUSTER_TOL * self.norm {
                cluster += 1;
            }
        }
        if cluster == self.cursor.len() {
            self.cluster_first.push(self.tasks.len());
            self.cursor.push(self.tasks.len());
            self.cluster_end.push(self.tasks.len());
        }
        self.cluster_end[cluster] += 1;
        self.tasks.push(Task {
            column,
            shift,
            cluster,
        });
    }

    /// The unit eigenvectors of every added level into their columns of `vectors` (the block's
    /// rows starting at `start`, zero elsewhere); false if some vector did not pass the growth
    /// test often enough within [`MAX_ITERATIONS`].
    fn run(&mut self, start: usize, mut vectors: MatMut<'_, f64>) -> bool {
        let s = self.d.len();
        if s == 1 {
            for task in &self.tasks {
                let mut col = vectors.rb_mut().col_mut(task.column);
                col.fill(0.0);
                col[start] = 1.0;
            }
            return true;
        }
        let mut ok = true;
        let mut first_open = 0;
        loop {
            // One round: the next task of each of the first LANES clusters with tasks left. A
            // task's cluster predecessors all ran in earlier rounds.
            while first_open < self.cursor.len()
                && self.cursor[first_open] == self.cluster_end[first_open]
            {
                first_open += 1;
            }
            let mut round = [usize::MAX; LANES];
            let mut used = 0;
            for c in first_open..self.cursor.len() {
                if used == LANES {
                    break;
                }
                if self.cursor[c] < self.cluster_end[c] {
                    round[used] = self.cursor[c];
                    self.cursor[c] += 1;
                    used += 1;
                }
            }
            if used == 0 {
                return ok;
            }
            ok &= self.round(&round[..used], start, vectors.rb_mut());
        }
    }

    /// Inverse iteration for the tasks `round` (at most [`LANES`], from different clusters),
    /// side by side; spare lanes repeat the last shift and are ignored.
    fn round(&mut self, round: &[usize], start: usize, mut vectors: MatMut<'_, f64>) -> bool {
        let s = self.d.len();
        let shifts: [f64; LANES] =
            std::array::from_fn(|l| self.tasks[round[l.min(round.len() - 1)]].shift);
        self.factor(shifts);
        for (row, &v) in self.x[..s].iter_mut().zip(&self.start) {
            *row = [v; LANES];
        }
        let growth = (0.1 / s as f64).sqrt();
        let mut passed = [0; LANES];
        let mut done = [false; LANES];
        for _ in 0..MAX_ITERATIONS {
            let mut sums = [0.0; LANES];
            for row in &self.x[..s] {
                for l in 0..LANES {
                    sums[l] += row[l].abs();
                }
            }
            let last = self.u0[s - 1];
            let scales: [f64; LANES] = std::array::from_fn(|l| {
                s as f64 * self.norm * f64::EPSILON.max(last[l].abs()) / sums[l]
            });
            for row in &mut self.x[..s] {
                for l in 0..LANES {
                    row[l] *= scales[l];
                }
            }
            self.solve();
            for (l, &t) in round.iter().enumerate() {
                if done[l] {
                    continue;
                }
                self.orthogonalise(l, t, start, vectors.rb());
                if largest_in_lane(&self.x[..s], l).1 < growth {
                    continue;
                }
                passed[l] += 1;
                if passed[l] > EXTRA_ITERATIONS {
                    done[l] = true;
                    self.store(l, self.tasks[t].column, start, vectors.rb_mut());
                }
            }
            if done[..round.len()].iter().all(|&d| d) {
                return true;
            }
        }
        for (l, &t) in round.iter().enumerate() {
            if !done[l] {
                self.store(l, self.tasks[t].column, start, vectors.rb_mut());
            }
        }
        false
    }

    /// Modified Gram-Schmidt of lane `lane` against the vectors of the earlier tasks of task
    /// `task`'s cluster.
    fn orthogonalise(&mut self, lane: usize, task: usize, start: usize, vectors: MatRef<'_, f64>) {
        let s = self.d.len();
        let first = self.cluster_first[self.tasks[task].cluster];
        for other in &self.tasks[first..task] {
            let z = vectors
                .col(other.column)
                .subrows(start, s)
                .try_as_col_major()
                .expect("a column of a column-major matrix is contiguous")
                .as_slice();
            let x = &mut self.x[..s];
            let overlap: f64 = x.iter().zip(z).map(|(a, b)| a[lane] * b).sum();
            x.iter_mut()
                .zip(z)
                .for_each(|(a, b)| a[lane] -= overlap * b);
        }
    }

    /// Lane `lane` normalised, its largest entry positive, into column `column` of `vectors`.
    fn store(&self, lane: usize, column: usize, start: usize, mut vectors: MatMut<'_, f64>) {
        let x = &self.x[..self.d.len()];
        let norm = x.iter().map(|v| v[lane] * v[lane]).sum::<f64>().sqrt();
        let (biggest, _) = largest_in_lane(x, lane);
        let scale = if x[biggest][lane] < 0.0 {
            -1.0 / norm
        } else {
            1.0 / norm
        };
        let mut col = vectors.rb_mut().col_mut(column);
        col.fill(0.0);
        for (k, v) in x.iter().enumerate() {
            col[start + k] = v[lane] * scale;
        }
    }

    /// P L U = T − σI with partial pivoting for the shift σ of each lane (U upper triangular
    /// with two superdiagonals; the row choice of LAPACK's `dlagtf`, compared by
    /// cross-multiplication and made with selects rather than branches). A pivot smaller than
    /// ε max|U| is replaced by ±ε max|U| (a perturbation of T − σI within its rounding), so the
    /// solves can multiply by reciprocals. (max|U| is taken as the largest row sum of |U|, within a
    /// factor 3 of the largest entry.)
    fn factor(&mut self, shifts: [f64; LANES]) {
        let s = self.d.len();
        let (d, e) = (&self.d, &self.e);
        let mut a: [f64; LANES] = shifts.map(|shift| d[0] - shift);
        let mut b = [e[0]; LANES];
        let mut scale1: [f64; LANES] = std::array::from_fn(|l| a[l].abs() + b[l].abs());
        for k in 0..s - 1 {
            let c = e[k];
            let below: [f64; LANES] = shifts.map(|shift| d[k + 1] - shift);
            let right = if k + 2 < s { e[k + 1] } else { 0.0 };
            for l in 0..LANES {
                let scale2 = c.abs() + below[l].abs() + right.abs();
                let swap = c != 0.0 && (a[l] == 0.0 || c.abs() * scale1[l] > a[l].abs() * scale2);
                let (numerator, denominator) = if swap { (a[l], c) } else { (c, a[l]) };
                let m = if c == 0.0 {
                    0.0
                } else {
                    numerator / denominator
                };
                self.u0[k][l] = if swap { c } else { a[l] };
                self.u1[k][l] = if swap { below[l] } else { b[l] };
                self.u2[k][l] = if swap { right } else { 0.0 };
                self.mult[k][l] = m;
                self.swapped[k][l] = swap;
                let next_a = if swap {
                    b[l] - m * below[l]
                } else {
                    below[l] - m * b[l]
                };
                b[l] = if swap { -m * right } else { right };
                a[l] = next_a;
                if !swap {
                    scale1[l] = scale2;
                }
            }
        }
        self.u0[s - 1] = a;
        self.u1[s - 1] = [0.0; LANES];
        self.u2[s - 1] = [0.0; LANES];
        let mut size = [0.0f64; LANES];
        for k in 0..s {
            for (l, largest) in size.iter_mut().enumerate() {
                let entry = self.u0[k][l].abs() + self.u1[k][l].abs() + self.u2[k][l].abs();
                if entry > *largest {
                    *largest = entry;
                }
            }
        }
        for (l, &size) in size.iter().enumerate() {
            let tol = (f64::EPSILON * size).max(f64::MIN_POSITIVE);
            // The solve needs x_k = (y_k − U_k,k+1 x_k+1 − U_k,k+2 x_k+2) / U_kk: keep 1/U_kk and
            // the superdiagonals divided by U_kk.
            for k in 0..s {
                let pivot = self.u0[k][l];
                let pivot = if pivot.abs() >= tol {
                    pivot
                } else if pivot < 0.0 {
                    -tol
                } else {
                    tol
                };
                self.u0[k][l] = pivot;
                self.inverse_pivot[k][l] = 1.0 / pivot;
                self.u1[k][l] /= pivot;
                self.u2[k][l] /= pivot;
            }
        }
    }

    /// Solves (T − σI) y = x in place in `x`, every lane with its own factors.
    fn solve(&mut self) {
        let s = self.d.len();
        let x = &mut self.x[..s];
        // L: row swaps and eliminations, the newest row carried in registers.
        let mut last = x[0];
        for k in 1..s {
            let here = x[k];
            for l in 0..LANES {
                let swap = self.swapped[k - 1][l];
                let keep = if swap { here[l] } else { last[l] };
                let other = if swap { last[l] } else { here[l] };
                x[k - 1][l] = keep;
                last[l] = other - self.mult[k - 1][l] * keep;
            }
        }
        x[s - 1] = last;
        // U, bottom up.
        let (mut next, mut after) = ([0.0; LANES], [0.0; LANES]);
        for k in (0..s).rev() {
            let mut value = [0.0; LANES];
            for l in 0..LANES {
                value[l] = x[k][l] * self.inverse_pivot[k][l]
                    - self.u2[k][l] * after[l]
                    - self.u1[k][l] * next[l];
            }
            x[k] = value;
            after = next;
            next = value;
        }
    }
}

/// Index and magnitude of the entry of lane `lane` largest in magnitude (the first of equals).
fn largest_in_lane(x: &[[f64; LANES]], lane: usize) -> (usize, f64) {
    let mut best = (0, 0.0);
    for (k, v) in x.iter().enumerate() {
        if v[lane].abs() > best.1 {
            best = (k, v[lane].abs());
        }
    }
    best
}

/// Fixed pseudo-random numbers in (−1, 1), the start of every inverse iteration: SplitMix64
/// (Steele, Lea & Flood, OOPSLA 2014) of the position, so every run starts from the same vector.
fn starting_vector(x: &mut [f64]) {
    for (k, v) in x.iter_mut().enumerate() {
        let mut z = (k as u64 + 1).wrapping_mul(0x9E37_79B9_7F4A_7C15);
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^= z >> 31;
        let unit = (z >> 11) as f64 / (1u64 << 53) as f64;
        *v = 2.0 * unit - 1.0;
    }
}

/// Every eigenvalue (unsorted, into `d`) of the symmetric tridiagonal matrix with diagonal `d`
/// and off-diagonal `e` (destroyed): the square-root-free implicit QL/QR iteration of Pal,
/// Walker and Kahan with Wilkinson-like shifts, as LAPACK's `dsterf` arranges it (QL or QR
/// chosen per block by which end is smaller; at most 30 sweeps per eigenvalue on average).
/// False if it did not converge.
fn root_free_qr(d: &mut [f64], e: &mut [f64]) -> bool {
    let n = d.len();
    let eps = f64::EPSILON / 2.0;
    let eps2 = eps * eps;
    let max_sweeps = 30 * n;
    let mut sweeps = 0;
    let mut first = 0;
    while first < n {
        if first > 0 {
            e[first - 1] = 0.0;
        }
        let mut last = first;
        while last + 1 < n {
            if e[last].abs() <= d[last].abs().sqrt() * d[last + 1].abs().sqrt() * eps {
                e[last] = 0.0;
                break;
            }
            last += 1;
        }
        let (top, bottom) = (first, last);
        first = last + 1;
        if top == bottom {
            continue;
        }
        let scale = power_of_two_scale(&d[top..=bottom], &e[top..bottom]);
        d[top..=bottom].iter_mut().for_each(|v| *v *= scale);
        e[top..bottom]
            .iter_mut()
            .for_each(|v| *v = (*v * scale) * (*v * scale));
        let converged = if d[bottom].abs() < d[top].abs() {
            qr_sweeps(d, e, bottom, top, eps2, &mut sweeps, max_sweeps)
        } else {
            ql_sweeps(d, e, top, bottom, eps2, &mut sweeps, max_sweeps)
        };
        d[top..=bottom].iter_mut().for_each(|v| *v /= scale);
        if !converged {
            return false;
        }
    }
    true
}

/// A power of two that brings the largest entry near 1 when it is so large or small that its
/// square could overflow or underflow (exact, so it changes no rounding); 1 otherwise.
fn power_of_two_scale(d: &[f64], e: &[f64]) -> f64 {
    let largest = d.iter().chain(e).fold(0.0f64, |m, v| m.max(v.abs()));
    if largest == 0.0 || (1e-100..1e100).contains(&largest) {
        return 1.0;
    }
    2f64.powi(-(largest.log2().round() as i32))
}

/// QL sweeps on rows `l..=lend` (l < lend) of d and the squared off-diagonal e, deflating at
/// the top.
fn ql_sweeps(
    d: &mut [f64],
    e: &mut [f64],
    mut l: usize,
    lend: usize,
    eps2: f64,
    sweeps: &mut usize,
    max_sweeps: usize,
) -> bool {
    while l <= lend {
        let mut m = l;
        while m < lend && e[m].abs() > eps2 * (d[m] * d[m + 1]).abs() {
            m += 1;
        }
        if m < lend {
            e[m] = 0.0;
        }
        if m == l {
            l += 1;
            continue;
        }
        if m == l + 1 {
            (d[l], d[l + 1]) = two_by_two(d[l], e[l].sqrt(), d[l + 1]);
            e[l] = 0.0;
            l += 2;
            continue;
        }
        if *sweeps == max_sweeps {
            return false;
        }
        *sweeps += 1;
        let p = d[l];
        let rte = e[l].sqrt();
        let sigma = (d[l + 1] - p) / (2.0 * rte);
        let sigma = p - rte / (sigma + sigma.hypot(1.0).copysign(sigma));
        let (mut c, mut s) = (1.0, 0.0);
        let mut gamma = d[m] - sigma;
        let mut p = gamma * gamma;
        for i in (l..m).rev() {
            let bb = e[i];
            let r = p + bb;
            if i + 1 != m {
                e[i + 1] = s * r;
            }
            let old_c = c;
            c = p / r;
            s = bb / r;
            let old_gamma = gamma;
            let alpha = d[i];
            gamma = c * (alpha - sigma) - s * old_gamma;
            d[i + 1] = old_gamma + (alpha - gamma);
            p = if c != 0.0 {
                gamma * gamma / c
            } else {
                old_c * bb
            };
        }
        e[l] = s * p;
        d[l] = sigma + gamma;
    }
    true
}

/// QR sweeps on rows `lend..=l` (lend < l), deflating at the bottom; the mirror image of
/// [`ql_sweeps`].
fn qr_sweeps(
    d: &mut [f64],
    e: &mut [f64],
    mut l: usize,
    lend: usize,
    eps2: f64,
    sweeps: &mut usize,
    max_sweeps: usize,
) -> bool {
    loop {
        let mut m = l;
        while m > lend && e[m - 1].abs() > eps2 * (d[m] * d[m - 1]).abs() {
            m -= 1;
        }
        if m > lend {
            e[m - 1] = 0.0;
        }
        if m == l {
            if l == lend {
                return true;
            }
            l -= 1;
            continue;
        }
        if m + 1 == l {
            (d[l], d[l - 1]) = two_by_two(d[l], e[l - 1].sqrt(), d[l - 1]);
            e[l - 1] = 0.0;
            if l < lend + 2 {
                return true;
            }
            l -= 2;
            continue;
        }
        if *sweeps == max_sweeps {
            return false;
        }
        *sweeps += 1;
        let p = d[l];
        let rte = e[l - 1].sqrt();
        let sigma = (d[l - 1] - p) / (2.0 * rte);
        let sigma = p - rte / (sigma + sigma.hypot(1.0).copysign(sigma));
        let (mut c, mut s) = (1.0, 0.0);
        let mut gamma = d[m] - sigma;
        let mut p = gamma * gamma;
        for i in m..l {
            let bb = e[i];
            let r = p + bb;
            if i != m {
                e[i - 1] = s * r;
            }
            let old_c = c;
            c = p / r;
            s = bb / r;
            let old_gamma = gamma;
            let alpha = d[i + 1];
            gamma = c * (alpha - sigma) - s * old_gamma;
            d[i] = old_gamma + (alpha - gamma);
            p = if c != 0.0 {
                gamma * gamma / c
            } else {
                old_c * bb
            };
        }
        e[l - 1] = s * p;
        d[l] = sigma + gamma;
    }
}

/// The eigenvalues of the symmetric 2×2 matrix [[a, b], [b, c]], the larger in magnitude first,
/// computed without cancellation (as LAPACK's `dlae2`).
fn two_by_two(a: f64, b: f64, c: f64) -> (f64, f64) {
    let sum = a + c;
    let diff = (a - c).abs();
    let twice_b = (2.0 * b).abs();
    let (big, small) = if a.abs() > c.abs() { (a, c) } else { (c, a) };
    let root = diff.hypot(twice_b);
    if sum == 0.0 {
        return (0.5 * root, -0.5 * root);
    }
    let first = 0.5 * (sum + root.copysign(sum));
    (first, (big / first) * small - (b / first) * b)
}
