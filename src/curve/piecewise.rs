//! A piecewise-constant rate on [0, inf) and its running integral.

/// A rate that is constant between breakpoints and flat after the last one.
///
/// `values[i]` holds on `[times[i-1], times[i])` (with `times[-1] = 0`), and
/// `values[n]` after `times[n-1]`; so `values.len() == times.len() + 1`.
#[derive(Debug, Clone, PartialEq)]
pub struct PiecewiseConstant {
    times: Vec<f64>,
    values: Vec<f64>,
    /// Integral of the rate from 0 to `times[i]`.
    integral_at: Vec<f64>,
}

impl PiecewiseConstant {
    /// A constant rate.
    pub fn flat(value: f64) -> Self {
        PiecewiseConstant {
            times: Vec::new(),
            values: vec![value],
            integral_at: Vec::new(),
        }
    }

    /// A rate from strictly increasing positive breakpoints and one more value
    /// than breakpoints.
    pub fn new(times: Vec<f64>, values: Vec<f64>) -> Self {
        assert_eq!(
            values.len(),
            times.len() + 1,
            "one more value than breakpoints"
        );
        let mut integral_at = Vec::with_capacity(times.len());
        let (mut acc, mut prev) = (0.0, 0.0);
        for (i, &t) in times.iter().enumerate() {
            acc += values[i] * (t - prev);
            integral_at.push(acc);
            prev = t;
        }
        PiecewiseConstant {
            times,
            values,
            integral_at,
        }
    }

    /// Breakpoints.
    pub fn times(&self) -> &[f64] {
        &self.times
    }

    /// Values (one more than breakpoints).
    pub fn values(&self) -> &[f64] {
        &self.values
    }

    /// Index of the piece holding `t` (pieces are closed on the left).
    fn piece(&self, t: f64) -> usize {
        self.times.partition_point(|&b| b <= t)
    }

    /// The rate in force just after `t`.
    pub fn value_at(&self, t: f64) -> f64 {
        self.values[self.piece(t)]
    }

    /// Integral of the rate from 0 to `t` (t >= 0).
    pub fn integral(&self, t: f64) -> f64 {
        let i = self.piece(t);
        let (base, start) = if i == 0 {
            (0.0, 0.0)
        } else {
            (self.integral_at[i - 1], self.times[i - 1])
        };
        base + self.values[i] * (t - start)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn integral_by_pieces() {
        let c = PiecewiseConstant::new(vec![1.0, 3.0], vec![0.01, 0.02, 0.05]);
        assert!((c.integral(0.5) - 0.005).abs() < 1e-15);
        assert!((c.integral(1.0) - 0.01).abs() < 1e-15);
        assert!((c.integral(2.0) - 0.03).abs() < 1e-15);
        assert!((c.integral(4.0) - (0.01 + 0.04 + 0.05)).abs() < 1e-15);
        assert_eq!(c.value_at(1.0), 0.02);
        assert_eq!(c.value_at(0.999), 0.01);
    }
}
