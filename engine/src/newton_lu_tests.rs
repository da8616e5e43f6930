//! Tests of the Newton-matrix solver (`newton_lu.rs`).

use super::*;
use diffsol::VectorCommon;

/// A column-major square matrix from rows.
fn square<const K: usize>(rows: [[T; K]; K]) -> Square<K> {
    let mut a = [[0.0; K]; K];
    for (i, row) in rows.iter().enumerate() {
        for (j, &v) in row.iter().enumerate() {
            a[j][i] = v;
        }
    }
    a
}

fn mat_vec<const K: usize>(a: &Square<K>, x: &[T; K]) -> [T; K] {
    let mut y = [0.0; K];
    for (j, col) in a.iter().enumerate() {
        for i in 0..K {
            y[i] += col[i] * x[j];
        }
    }
    y
}

fn mat_t_vec<const K: usize>(a: &Square<K>, x: &[T; K]) -> [T; K] {
    let mut y = [0.0; K];
    for (j, col) in a.iter().enumerate() {
        y[j] = (0..K).map(|i| col[i] * x[i]).sum();
    }
    y
}

#[test]
fn lu_solves_a_system_that_needs_pivoting() {
    // The first pivot is zero: rows must be swapped.
    let a = square([
        [0.0, 2.0, 1.0, 0.5],
        [3.0, 1.0, 0.0, 2.0],
        [1.0, -1.0, 4.0, 0.0],
        [2.0, 0.0, 1.0, 5.0],
    ]);
    let x = [1.0, -2.0, 0.5, 3.0];
    let mut lu = a;
    let mut piv = [0; 4];
    let mut recip = [0.0; 4];
    assert!(factor(&mut lu, &mut piv, &mut recip));
    let mut b = mat_vec(&a, &x);
    solve(&lu, &piv, &recip, &mut b);
    for (got, want) in b.iter().zip(x) {
        assert!((got - want).abs() < 1e-13, "{got} vs {want}");
    }
    let mut bt = mat_t_vec(&a, &x);
    solve_transpose(&lu, &piv, &mut bt);
    for (got, want) in bt.iter().zip(x) {
        assert!((got - want).abs() < 1e-13, "{got} vs {want}");
    }
}

/// LU with partial pivoting updating every row below the pivot: the
/// textbook algorithm the kernel must match.
fn dense_factor<const K: usize>(a: &mut Square<K>, piv: &mut [usize; K], recip: &mut [T; K]) {
    for k in 0..K {
        let mut p = k;
        for i in k + 1..K {
            if a[k][i].abs() > a[k][p].abs() {
                p = i;
            }
        }
        piv[k] = p;
        for col in a.iter_mut() {
            col.swap(k, p);
        }
        recip[k] = 1.0 / a[k][k];
        let r = recip[k];
        for v in &mut a[k][k + 1..] {
            *v *= r;
        }
        let l = a[k];
        for col in &mut a[k + 1..] {
            let f = col[k];
            for i in k + 1..K {
                col[i] -= f * l[i];
            }
        }
    }
}

#[test]
fn the_kernel_gives_the_textbook_factors_bit_for_bit() {
    // A sparse banded matrix with a few far entries and small diagonals,
    // so that rows are swapped and many multipliers are zero (skipped by
    // the kernel).
    const K: usize = 16;
    let mut a = [[0.0; K]; K];
    for i in 0..K {
        a[i][i] = 0.1 + 0.01 * i as T;
        if i + 1 < K {
            a[i][i + 1] = 1.0 + 0.3 * i as T;
            a[i + 1][i] = -0.7 + 0.05 * i as T;
        }
    }
    a[0][K - 1] = 2.5;
    a[K - 3][2] = -1.25;
    let (mut lu, mut piv, mut recip) = (a, [0; K], [0.0; K]);
    assert!(factor(&mut lu, &mut piv, &mut recip));
    let (mut want, mut want_piv, mut want_recip) = (a, [0; K], [0.0; K]);
    dense_factor(&mut want, &mut want_piv, &mut want_recip);
    assert_eq!(piv, want_piv);
    assert!(
        piv.iter().enumerate().any(|(k, &p)| p != k),
        "no row was swapped"
    );
    for j in 0..K {
        assert_eq!(recip[j].to_bits(), want_recip[j].to_bits());
        for i in 0..K {
            // The same number; a zero may differ only in its sign.
            assert!(lu[j][i] == want[j][i], "entry ({i}, {j})");
            if lu[j][i] != 0.0 {
                assert_eq!(lu[j][i].to_bits(), want[j][i].to_bits(), "entry ({i}, {j})");
            }
        }
    }
    let x: [T; K] = std::array::from_fn(|i| 1.0 - 0.1 * i as T);
    let mut b = mat_vec(&a, &x);
    solve(&lu, &piv, &recip, &mut b);
    for (got, want) in b.iter().zip(x) {
        assert!((got - want).abs() < 1e-12, "{got} vs {want}");
    }
}

#[test]
fn singular_matrix_is_reported() {
    let mut a = square([[1.0, 2.0], [2.0, 4.0]]);
    let mut piv = [0; 2];
    assert!(!factor(&mut a, &mut piv, &mut [0.0; 2]));
}

/// A linear operator holding a fixed matrix.
struct Fixed(M);

impl LaLinearOp for Fixed {
    type T = T;
    type V = V;
    type M = M;
    type C = diffsol::NalgebraContext;
    fn nrows(&self) -> usize {
        self.0.nrows()
    }
    fn ncols(&self) -> usize {
        self.0.ncols()
    }
    fn context(&self) -> &Self::C {
        self.0.context()
    }
    fn matrix_inplace(&self, y: &mut M) {
        y.copy_from(&self.0);
    }
}

/// Solve with the ledger solver for a matrix given by rows, then
/// check `A·x = b` and `A^T·x = b` by multiplication.
fn check_solves(rows: [[T; 3]; 3]) -> bool {
    let a = square(rows);
    let mut m = M::zeros(3, 3, Default::default());
    for (j, col) in a.iter().enumerate() {
        for (i, &v) in col.iter().enumerate() {
            m[(i, j)] = v;
        }
    }
    let mut ls = LedgerLu::<2, 1, 3>::default();
    let op = Fixed(m);
    ls.set_sparsity(&op);
    ls.set_linearisation(&op);
    let x = [0.7, -1.3, 2.1];
    let mut b = V::from_vec(mat_vec(&a, &x).to_vec(), Default::default());
    ls.solve_in_place(&mut b).unwrap();
    let mut bt = V::from_vec(mat_t_vec(&a, &x).to_vec(), Default::default());
    ls.solve_transpose_in_place(&mut bt).unwrap();
    for (got, want) in b.inner().as_slice().iter().zip(x) {
        assert!((got - want).abs() < 1e-13, "{got} vs {want}");
    }
    for (got, want) in bt.inner().as_slice().iter().zip(x) {
        assert!((got - want).abs() < 1e-13, "{got} vs {want}");
    }
    ls.ledger_shape
}

#[test]
fn ledger_shape_is_used_when_present_and_full_lu_otherwise() {
    // Two body states and one ledger entry that reads nothing.
    assert!(check_solves([
        [0.0, 3.0, 0.0],
        [2.0, 1.0, 0.0],
        [0.5, -0.2, 1.0]
    ]));
    // A matrix whose body rows read the last state: solved whole.
    assert!(!check_solves([
        [0.0, 3.0, 0.1],
        [2.0, 1.0, 0.0],
        [0.5, -0.2, 1.0]
    ]));
    // The trailing block is not the identity: solved whole.
    assert!(!check_solves([
        [0.0, 3.0, 0.0],
        [2.0, 1.0, 0.0],
        [0.5, -0.2, 2.0]
    ]));
}
