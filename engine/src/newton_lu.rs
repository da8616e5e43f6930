//! The linear solver of the Newton iterations: a dense LU factorisation
//! that exploits the shape of the Newton matrix `I − c·J`.
//!
//! The ledger entries of the state (cumulative intake and output, see
//! [`crate::body::StateSlot`]) are pure quadratures: no rate depends on them. Their
//! columns of the Jacobian are therefore zero, and the Newton matrix is
//! block lower triangular,
//!
//! ```text
//!     | A  0 |        A: body × body (n_b × n_b)
//!     | C  I |        C: ledger × body, I: identity
//! ```
//!
//! so `A` alone needs factorising (25 states instead of 38: about a third
//! of the work) and the ledger part of a solution follows by one
//! matrix-vector product, `x_L = b_L − C·x_B`. Nothing is approximated: the
//! solution is the solution of the full system to rounding, so the solver
//! takes the same steps, and the ledger stays inside the Newton iteration,
//! where every linear invariant of the equations (water and each solute:
//! content − intake + output) is kept exactly. Before each factorisation the
//! matrix is checked to have that shape; when it has not (a future model
//! whose rates read the ledger), the whole matrix is factorised instead.
//!
//! The factors keep the reciprocals of the pivots, so a solve multiplies
//! where it would divide: `x·(1/d)` may differ from `x/d` in the last bit,
//! which is far inside the solver's tolerances.

use diffsol::{LaError, LaLinearOp, Matrix, MatrixCommon, NalgebraMat, NalgebraVec, Vector};
use diffsol_la::LinearSolver;

type T = f64;
type M = NalgebraMat<T>;
type V = NalgebraVec<T>;

fn singular() -> LaError {
    LaError::Other("the Newton matrix is singular".into())
}

/// A column-major square matrix of order `N`: `a[j][i]` is row `i` of
/// column `j`. Fixed sizes let the compiler drop bounds checks and
/// vectorise the column updates.
type Square<const N: usize> = [[T; N]; N];

/// The kernels below (`factor`, `solve`, `sub_coupling`) are compiled twice
/// on x86-64: for the baseline instruction set and with 256-bit vectors
/// (AVX), picked at run time. AVX here means wider vectors of the same
/// IEEE multiplications and subtractions, in the same order (no fused
/// multiply-add), so both give the same bits.
macro_rules! with_avx {
    ($(#[$doc:meta])* fn $name:ident<const $n:ident: usize>($($arg:ident: $ty:ty),*) $(-> $ret:ty)?,
     $avx:ident, $kernel:ident) => {
        $(#[$doc])*
        fn $name<const $n: usize>($($arg: $ty),*) $(-> $ret)? {
            #[cfg(target_arch = "x86_64")]
            if std::arch::is_x86_feature_detected!("avx") {
                // SAFETY: the processor supports AVX (checked just above).
                return unsafe { $avx::<$n>($($arg),*) };
            }
            $kernel::<$n>($($arg),*)
        }

        #[cfg(target_arch = "x86_64")]
        #[target_feature(enable = "avx")]
        unsafe fn $avx<const $n: usize>($($arg: $ty),*) $(-> $ret)? {
            $kernel::<$n>($($arg),*)
        }
    };
}

with_avx!(
    /// In-place LU with partial pivoting. `piv[k]` is the row swapped with
    /// row `k` at step `k` (LAPACK style: whole rows are swapped);
    /// `recip[k]` is `1 / U[k][k]`. Returns false when a pivot is exactly
    /// zero.
    fn factor<const N: usize>(a: &mut Square<N>, piv: &mut [usize; N], recip: &mut [T; N]) -> bool,
    factor_avx,
    factor_kernel
);

with_avx!(
    /// Solve `(P·A = L·U)·x = b` in place.
    fn solve<const N: usize>(lu: &Square<N>, piv: &[usize; N], recip: &[T; N], b: &mut [T; N]),
    solve_avx,
    solve_kernel
);

with_avx!(
    /// `x_L −= C·x_B` for the ledger × body block `C` (column-major, `N`
    /// rows per column).
    fn sub_coupling<const N: usize>(c: &[T], x_body: &[T], x_ledger: &mut [T; N]),
    sub_coupling_avx,
    sub_coupling_kernel
);

#[inline(always)]
fn sub_coupling_kernel<const N: usize>(c: &[T], x_body: &[T], x_ledger: &mut [T; N]) {
    for (col, &xj) in c.chunks_exact(N).zip(x_body) {
        let col: &[T; N] = col.try_into().expect("N rows per column");
        for i in 0..N {
            x_ledger[i] -= col[i] * xj;
        }
    }
}

#[inline(always)]
fn factor_kernel<const N: usize>(
    a: &mut Square<N>,
    piv: &mut [usize; N],
    recip: &mut [T; N],
) -> bool {
    let mut regular = true;
    for k in 0..N {
        let mut p = k;
        let mut big = a[k][k].abs();
        for (i, v) in a[k].iter().enumerate().skip(k + 1) {
            if v.abs() > big {
                big = v.abs();
                p = i;
            }
        }
        piv[k] = p;
        if p != k {
            for col in a.iter_mut() {
                col.swap(k, p);
            }
        }
        let d = a[k][k];
        if d == 0.0 {
            regular = false;
            recip[k] = 0.0;
            continue;
        }
        let inv = 1.0 / d;
        recip[k] = inv;
        for v in &mut a[k][k + 1..] {
            *v *= inv;
        }
        let l = a[k];
        for col in &mut a[k + 1..] {
            let f = col[k];
            if f != 0.0 {
                for i in k + 1..N {
                    col[i] -= f * l[i];
                }
            }
        }
    }
    regular
}

#[inline(always)]
fn solve_kernel<const N: usize>(lu: &Square<N>, piv: &[usize; N], recip: &[T; N], b: &mut [T; N]) {
    for (k, &p) in piv.iter().enumerate() {
        b.swap(k, p);
    }
    // L·z = P·b (unit diagonal), column by column.
    for k in 0..N {
        let bk = b[k];
        let col = &lu[k];
        for i in k + 1..N {
            b[i] -= bk * col[i];
        }
    }
    // U·x = z, column by column from the last.
    for k in (0..N).rev() {
        let col = &lu[k];
        b[k] *= recip[k];
        let bk = b[k];
        for i in 0..k {
            b[i] -= bk * col[i];
        }
    }
}

/// Solve `A^T·x = b` in place with the factors of `P·A = L·U`.
fn solve_transpose<const N: usize>(lu: &Square<N>, piv: &[usize; N], b: &mut [T; N]) {
    // U^T·z = b.
    for k in 0..N {
        let col = &lu[k];
        let s: T = (0..k).map(|i| col[i] * b[i]).sum();
        b[k] = (b[k] - s) / col[k];
    }
    // L^T·w = z.
    for k in (0..N).rev() {
        let col = &lu[k];
        let s: T = (k + 1..N).map(|i| col[i] * b[i]).sum();
        b[k] -= s;
    }
    for k in (0..N).rev() {
        b.swap(k, piv[k]);
    }
}

/// The LU factors of a matrix of order `N`.
struct Factors<const N: usize> {
    lu: Box<Square<N>>,
    piv: [usize; N],
    /// Reciprocals of the pivots (the diagonal of `U`): a solve multiplies
    /// where it would divide.
    recip: [T; N],
    regular: bool,
}

impl<const N: usize> Factors<N> {
    fn new() -> Self {
        Factors {
            lu: Box::new([[0.0; N]; N]),
            piv: [0; N],
            recip: [0.0; N],
            regular: false,
        }
    }

    fn solve(&self, b: &mut [T; N]) {
        solve(&self.lu, &self.piv, &self.recip, b);
    }

    /// Factorise the leading `N × N` block of the column-major matrix `a`
    /// of order `n`.
    fn factor_leading(&mut self, a: &[T], n: usize) {
        for (j, col) in self.lu.iter_mut().enumerate() {
            col.copy_from_slice(&a[j * n..j * n + N]);
        }
        self.regular = factor(&mut self.lu, &mut self.piv, &mut self.recip);
    }
}

fn leading<const N: usize>(b: &mut [T]) -> &mut [T; N] {
    (&mut b[..N])
        .try_into()
        .expect("vector of the system's size")
}

/// The Newton-matrix solver (see the module docs) for `N` states of which
/// the leading `N_BODY` are the body (the only ones rates depend on) and
/// the trailing `NL = N − N_BODY` the ledger.
pub struct LedgerLu<const N_BODY: usize, const NL: usize, const N: usize> {
    /// The full Newton matrix as the solver builds it.
    matrix: Option<M>,
    /// Whether the last matrix had the ledger shape (else `full` holds the
    /// factors of the whole matrix).
    ledger_shape: bool,
    /// Factors of the body block.
    body: Factors<N_BODY>,
    /// The ledger × body block `C`, column-major with `N − N_BODY` rows.
    coupling: Vec<T>,
    /// Factors of the whole matrix, when it lacks the ledger shape.
    full: Option<Factors<N>>,
}

impl<const N_BODY: usize, const NL: usize, const N: usize> Default for LedgerLu<N_BODY, NL, N> {
    fn default() -> Self {
        assert_eq!(N_BODY + NL, N, "body and ledger make up the state");
        LedgerLu {
            matrix: None,
            ledger_shape: false,
            body: Factors::new(),
            coupling: vec![0.0; N_BODY * (NL)],
            full: None,
        }
    }
}

impl<const N_BODY: usize, const NL: usize, const N: usize> LedgerLu<N_BODY, NL, N> {
    /// Whether the full column-major matrix `a` has the ledger shape: zero
    /// above the identity of the trailing block.
    fn has_ledger_shape(a: &[T]) -> bool {
        (N_BODY..N).all(|j| {
            let col = &a[j * N..(j + 1) * N];
            col[..N_BODY].iter().all(|&x| x == 0.0)
                && col[N_BODY..]
                    .iter()
                    .enumerate()
                    .all(|(i, &x)| x == if N_BODY + i == j { 1.0 } else { 0.0 })
        })
    }

    /// The factors of the whole matrix, when they exist and are regular.
    fn regular_full(&self) -> Result<&Factors<N>, LaError> {
        self.full
            .as_ref()
            .filter(|f| f.regular)
            .ok_or_else(singular)
    }

    fn solve_slice(&self, b: &mut [T]) -> Result<(), LaError> {
        if self.ledger_shape {
            if !self.body.regular {
                return Err(singular());
            }
            self.body.solve(leading::<N_BODY>(b));
            // x_L = b_L − C·x_B.
            let (x_body, x_ledger) = b.split_at_mut(N_BODY);
            let x_ledger: &mut [T; NL] = x_ledger.try_into().expect("ledger entries");
            sub_coupling::<NL>(&self.coupling, x_body, x_ledger);
        } else {
            let full = self.regular_full()?;
            full.solve(leading::<N>(b));
        }
        if b.iter().all(|x| x.is_finite()) {
            Ok(())
        } else {
            Err(singular())
        }
    }
}

impl<const N_BODY: usize, const NL: usize, const N: usize> LinearSolver<M>
    for LedgerLu<N_BODY, NL, N>
{
    fn set_sparsity<C: LaLinearOp<V = V, T = T, M = M, C = diffsol::NalgebraContext>>(
        &mut self,
        op: &C,
    ) {
        assert!(
            op.nrows() == N && op.ncols() == N,
            "the Newton matrix has the order of the state"
        );
        self.matrix = Some(M::new_from_sparsity(N, N, op.sparsity(), *op.context()));
        self.ledger_shape = false;
        self.body.regular = false;
        self.full = None;
    }

    fn set_linearisation<C: LaLinearOp<V = V, T = T, M = M, C = diffsol::NalgebraContext>>(
        &mut self,
        op: &C,
    ) {
        let a = self.matrix.as_mut().expect("set_sparsity first");
        op.matrix_inplace(a);
        let a = a.inner().as_slice();
        self.ledger_shape = N_BODY < N && Self::has_ledger_shape(a);
        if self.ledger_shape {
            self.body.factor_leading(a, N);
            for (j, c) in self.coupling.chunks_exact_mut(NL).enumerate() {
                c.copy_from_slice(&a[j * N + N_BODY..(j + 1) * N]);
            }
        } else {
            self.full
                .get_or_insert_with(Factors::new)
                .factor_leading(a, N);
        }
    }

    fn solve_in_place(&self, b: &mut V) -> Result<(), LaError> {
        self.solve_slice(b.inner_mut().as_mut_slice())
    }

    fn solve_transpose_in_place(&self, b: &mut V) -> Result<(), LaError> {
        let b = b.inner_mut().as_mut_slice();
        if self.ledger_shape {
            if !self.body.regular {
                return Err(singular());
            }
            // A^T = | A_B^T  C^T |: x_L = b_L, then A_B^T·x_B = b_B − C^T·b_L.
            //       |   0     I  |
            let (x_body, x_ledger) = b.split_at_mut(N_BODY);
            for (c, xj) in self.coupling.chunks_exact(NL).zip(x_body.iter_mut()) {
                let s: T = c.iter().zip(x_ledger.iter()).map(|(ci, xi)| ci * xi).sum();
                *xj -= s;
            }
            solve_transpose(&self.body.lu, &self.body.piv, leading::<N_BODY>(b));
        } else {
            let full = self.regular_full()?;
            solve_transpose(&full.lu, &full.piv, leading::<N>(b));
        }
        Ok(())
    }
}

#[cfg(test)]
#[path = "newton_lu_tests.rs"]
mod tests;
