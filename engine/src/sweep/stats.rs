//! Statistics in constant memory, for summaries of any number of members:
//! a [`Histogram`] on fixed bins (percentiles, and mid-ranks for a second
//! pass) and running [`Moments`] of pairs (a correlation).

use serde::Serialize;

/// A histogram on fixed bins, for percentiles in constant memory.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Histogram {
    lo: f64,
    width: f64,
    counts: Vec<u64>,
    below: u64,
    above: u64,
    n: u64,
}

impl Histogram {
    /// Bins of `width` from `lo` to `hi`.
    pub fn new(lo: f64, hi: f64, width: f64) -> Self {
        let bins = ((hi - lo) / width).ceil() as usize;
        Histogram {
            lo,
            width,
            counts: vec![0; bins],
            below: 0,
            above: 0,
            n: 0,
        }
    }

    /// Add a value.
    pub fn add(&mut self, x: f64) {
        if !x.is_finite() {
            return;
        }
        self.n += 1;
        if x < self.lo {
            self.below += 1;
            return;
        }
        let k = ((x - self.lo) / self.width) as usize;
        match self.counts.get_mut(k) {
            Some(c) => *c += 1,
            None => self.above += 1,
        }
    }

    /// Counts below each bin (for [`Histogram::mid_rank`]): entry `k` is
    /// the number of values below bin `k`.
    pub fn cumulative(&self) -> Vec<u64> {
        let mut out = Vec::with_capacity(self.counts.len() + 1);
        let mut seen = self.below;
        for c in &self.counts {
            out.push(seen);
            seen += c;
        }
        out.push(seen);
        out
    }

    /// The mid-rank of `x` among the values added, as a fraction (0–1):
    /// values below its bin plus half of those in it, over all values.
    /// Values in one bin tie (the bins are the resolution). `cumulative` is
    /// [`Histogram::cumulative`].
    pub fn mid_rank(&self, cumulative: &[u64], x: f64) -> f64 {
        if self.n == 0 || !x.is_finite() {
            return f64::NAN;
        }
        let n = self.n as f64;
        if x < self.lo {
            return 0.5 * self.below as f64 / n;
        }
        let k = ((x - self.lo) / self.width) as usize;
        match self.counts.get(k) {
            Some(c) => (cumulative[k] as f64 + 0.5 * *c as f64) / n,
            None => (n - 0.5 * self.above as f64) / n,
        }
    }

    /// The `q`-quantile (0–1), to within one bin width (bin midpoint).
    pub fn quantile(&self, q: f64) -> f64 {
        if self.n == 0 {
            return f64::NAN;
        }
        let target = (q * self.n as f64).ceil().max(1.0) as u64;
        let mut seen = self.below;
        if seen >= target {
            return self.lo;
        }
        for (k, c) in self.counts.iter().enumerate() {
            seen += c;
            if seen >= target {
                return self.lo + (k as f64 + 0.5) * self.width;
            }
        }
        self.lo + self.counts.len() as f64 * self.width
    }
}

/// Running moments of (x, y) pairs, for a Pearson correlation in constant
/// memory; fed with ranks it gives the Spearman correlation of
/// [`Summary::sensitivity_by_output`](super::Summary::sensitivity_by_output).
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct Moments {
    n: f64,
    sx: f64,
    sy: f64,
    sxx: f64,
    syy: f64,
    sxy: f64,
}

impl Moments {
    /// Add a pair.
    pub(super) fn add(&mut self, x: f64, y: f64) {
        self.n += 1.0;
        self.sx += x;
        self.sy += y;
        self.sxx += x * x;
        self.syy += y * y;
        self.sxy += x * y;
    }

    /// Pearson correlation.
    pub fn correlation(&self) -> f64 {
        let cov = self.sxy / self.n - self.sx * self.sy / (self.n * self.n);
        let vx = self.sxx / self.n - (self.sx / self.n).powi(2);
        let vy = self.syy / self.n - (self.sy / self.n).powi(2);
        if vx <= 0.0 || vy <= 0.0 {
            0.0
        } else {
            cov / (vx * vy).sqrt()
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn histogram_quantiles_are_within_a_bin() {
        let mut h = Histogram::new(0.0, 100.0, 0.1);
        for i in 0..1000 {
            h.add(i as f64 / 10.0);
        }
        assert!((h.quantile(0.5) - 50.0).abs() < 0.2);
        assert!((h.quantile(0.05) - 5.0).abs() < 0.2);
    }
}
