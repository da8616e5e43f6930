//! From a spec to members: the grid, random and Latin hypercube designs
//! (each member a pure function of the spec and its number), the affine
//! permutation that stratifies a Latin hypercube without storing it, the
//! share of members whose balance is checked, and shards.

use super::random::SplitMix64;
use super::spec::{Design, SweepParameter, SweepSpec};
use crate::error::InputError;
use crate::numeric::gcd;
use serde::Serialize;

/// One member: its index and the value of each varied parameter (in spec
/// order).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Member {
    /// Index, 0-based.
    pub index: usize,
    /// Values, in the order of the spec's parameters.
    pub values: Vec<f64>,
}

impl SweepSpec {
    /// Number of members the design gives.
    pub fn member_count(&self) -> usize {
        match self.design {
            Design::Grid => self
                .parameters
                .iter()
                .map(|p| {
                    p.values
                        .as_ref()
                        .map_or(self.levels.unwrap_or(2), |v| v.len())
                })
                .product(),
            _ => self.members.unwrap_or(0),
        }
    }

    /// Member `index` (deterministic: depends only on the spec and index).
    pub fn member(&self, index: usize) -> Member {
        let values = match self.design {
            Design::Grid => {
                let mut rest = index;
                self.parameters
                    .iter()
                    .map(|p| {
                        let levels = p
                            .values
                            .as_ref()
                            .map_or(self.levels.unwrap_or(2), |v| v.len());
                        let k = rest % levels;
                        rest /= levels;
                        match (&p.values, p.range) {
                            (Some(v), _) => v[k],
                            (None, Some([a, b])) => a + (b - a) * k as f64 / (levels - 1) as f64,
                            _ => f64::NAN,
                        }
                    })
                    .collect()
            }
            Design::Random => {
                let mut rng =
                    SplitMix64::new(self.seed ^ (index as u64).wrapping_mul(0xA24B_AED4_963E_E407));
                self.parameters
                    .iter()
                    .map(|p| self.draw(p, rng.uniform()))
                    .collect()
            }
            Design::LatinHypercube => {
                let n = self.member_count();
                self.parameters
                    .iter()
                    .enumerate()
                    .map(|(j, p)| {
                        // Stratum of this member for parameter j: a seeded
                        // permutation of 0..n (Feistel-free: a random-key
                        // rank computed on the fly would be O(n) per member,
                        // so the permutation is an affine map mod n with a
                        // multiplier coprime to n, then jitter within the
                        // stratum).
                        let mut key = SplitMix64::new(self.seed ^ ((j as u64 + 1) << 32));
                        let stratum = affine_permutation(index, n, key.next_u64(), key.next_u64());
                        let mut jitter = SplitMix64::new(
                            self.seed
                                ^ (index as u64).wrapping_mul(0x9E37_79B9_7F4A_7C15)
                                ^ (j as u64).wrapping_mul(0xD1B5_4A32_D192_ED03),
                        );
                        let u = (stratum as f64 + jitter.uniform()) / n as f64;
                        self.draw(p, u)
                    })
                    .collect()
            }
        };
        Member { index, values }
    }

    fn draw(&self, p: &SweepParameter, u: f64) -> f64 {
        match (&p.values, p.range, &p.distribution) {
            (Some(v), _, _) => v[((u * v.len() as f64) as usize).min(v.len() - 1)],
            (None, Some([a, b]), _) => a + u * (b - a),
            (None, None, Some(d)) => d.quantile(u),
            _ => f64::NAN,
        }
    }
}

/// A permutation of `0..n`: `(a·i + b) mod n` with `a` made coprime to `n`.
fn affine_permutation(i: usize, n: usize, a: u64, b: u64) -> usize {
    if n <= 1 {
        return 0;
    }
    let n64 = n as u64;
    let mut a = a % n64;
    if a == 0 {
        a = 1;
    }
    while gcd(a, n64) != 1 {
        a = (a + 1) % n64;
        if a == 0 {
            a = 1;
        }
    }
    ((a as u128 * i as u128 + (b % n64) as u128) % n as u128) as usize
}

/// Whether member `i` gets its mass balance checked (a deterministic
/// share of the members).
pub fn checks_balance(spec: &SweepSpec, i: usize) -> bool {
    let mut r =
        SplitMix64::new(spec.seed ^ 0x5EED_BA1A ^ (i as u64).wrapping_mul(0x2545_F491_4F6C_DD1D));
    r.uniform() < spec.check_balance_share
}

/// Which slice of the members to run: member `i` belongs to shard
/// `i mod count` (0-based `index`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Shard {
    /// This shard, 0-based.
    pub index: usize,
    /// Number of shards.
    pub count: usize,
}

impl Shard {
    /// Every member.
    pub const ALL: Shard = Shard { index: 0, count: 1 };

    /// Parse `K/N` with 1-based K (as a person writes it).
    pub fn parse(text: &str) -> Result<Self, InputError> {
        let bad = || InputError::BadChoice {
            field: "shard".into(),
            value: text.into(),
            expected: "K/N with 1 <= K <= N".into(),
        };
        let (k, n) = text.split_once('/').ok_or_else(bad)?;
        let k: usize = k.trim().parse().map_err(|_| bad())?;
        let n: usize = n.trim().parse().map_err(|_| bad())?;
        if n == 0 || k == 0 || k > n {
            return Err(bad());
        }
        Ok(Shard {
            index: k - 1,
            count: n,
        })
    }

    /// Whether member `i` is in this shard.
    pub fn contains(&self, i: usize) -> bool {
        i % self.count == self.index
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sweep::spec::tests::spec;

    #[test]
    fn latin_hypercube_puts_one_member_in_each_stratum() {
        let s = spec("latin_hypercube", "members: 200\n");
        let mut strata = vec![0; 200];
        for i in 0..200 {
            let m = s.member(i);
            let u = (m.values[0] - 8.0) / 10.0;
            strata[(u * 200.0) as usize] += 1;
            assert!((30.0..=150.0).contains(&m.values[2]));
            assert_eq!(s.member(i), m, "deterministic");
        }
        assert!(strata.iter().all(|&c| c == 1));
    }

    #[test]
    fn grid_enumerates_every_combination() {
        let text = "scenario: b.rhai\ndesign: grid\nlevels: 3\nparameters:\n  - name: natriuresis_gain\n    range: [8, 18]\n  - name: patient.weight_kg\n    values: [50, 60]\n";
        let s = SweepSpec::from_yaml(text, "g.yaml").unwrap();
        assert_eq!(s.member_count(), 6);
        let all: Vec<Vec<f64>> = (0..6).map(|i| s.member(i).values).collect();
        assert!(all.contains(&vec![13.0, 60.0]) && all.contains(&vec![18.0, 50.0]));
    }

    #[test]
    fn shards_partition_the_members() {
        let s = Shard::parse("2/3").unwrap();
        assert_eq!(s, Shard { index: 1, count: 3 });
        assert!(s.contains(4) && !s.contains(3));
        assert!(
            Shard::parse("0/3").is_err()
                && Shard::parse("4/3").is_err()
                && Shard::parse("x").is_err()
        );
    }
}
