//! A limited-memory BFGS minimiser (Nocedal, Math. Comp. 35 (1980) 773; Liu & Nocedal, Math.
//! Program. 45 (1989) 503) with a backtracking Armijo line search (Nocedal & Wright, *Numerical
//! Optimization*, 2nd ed. 2006, algorithms 7.4 and 3.1).
//!
//! It knows nothing about chemistry: it minimises any smooth function given as a closure that
//! returns the value and fills the gradient. Convergence is judged on the largest per-atom force
//! (groups of three coordinates), the measure a chemist reads.

use std::collections::VecDeque;

/// When to stop.
#[derive(Debug, Clone, Copy)]
pub struct Settings {
    /// Converged when the largest per-atom gradient norm falls below this.
    pub max_force: f64,
    pub max_iterations: usize,
    /// Number of correction pairs kept.
    pub memory: usize,
}

impl Default for Settings {
    fn default() -> Self {
        Settings {
            max_force: 1e-6,
            max_iterations: 20_000,
            memory: 12,
        }
    }
}

/// What the minimiser reached.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Outcome {
    pub value: f64,
    pub max_force: f64,
    pub iterations: usize,
    pub converged: bool,
}

/// Largest norm over consecutive triples of `g` (the largest force on one atom).
pub fn max_atom_norm(g: &[f64]) -> f64 {
    g.chunks(3)
        .map(|c| c.iter().map(|v| v * v).sum::<f64>().sqrt())
        .fold(0.0, f64::max)
}

fn dot(a: &[f64], b: &[f64]) -> f64 {
    a.iter().zip(b).map(|(x, y)| x * y).sum()
}

/// Minimises `f` from `x` in place.
pub fn lbfgs(
    x: &mut [f64],
    settings: Settings,
    mut f: impl FnMut(&[f64], &mut [f64]) -> f64,
) -> Outcome {
    let n = x.len();
    let mut g = vec![0.0; n];
    let mut value = f(x, &mut g);
    let mut pairs: VecDeque<(Vec<f64>, Vec<f64>, f64)> = VecDeque::new();
    let mut trial = vec![0.0; n];
    let mut g_trial = vec![0.0; n];
    for iteration in 0..settings.max_iterations {
        let force = max_atom_norm(&g);
        if force < settings.max_force {
            return Outcome {
                value,
                max_force: force,
                iterations: iteration,
                converged: true,
            };
        }
        let mut dir = two_loop(&g, &pairs);
        let mut slope = dot(&dir, &g);
        if slope >= 0.0 {
            // Curvature information went stale: restart from steepest descent.
            pairs.clear();
            dir = g.iter().map(|v| -v).collect();
            slope = dot(&dir, &g);
        }
        let first = pairs.is_empty();
        let mut step = if first { 0.1 / force.max(1e-12) } else { 1.0 };
        let accepted = loop {
            for i in 0..n {
                trial[i] = x[i] + step * dir[i];
            }
            let v = f(&trial, &mut g_trial);
            if v <= value + 1e-4 * step * slope {
                break Some(v);
            }
            step *= 0.5;
            if step < 1e-20 {
                break None;
            }
        };
        let Some(new_value) = accepted else {
            return Outcome {
                value,
                max_force: force,
                iterations: iteration,
                converged: false,
            };
        };
        let s: Vec<f64> = (0..n).map(|i| trial[i] - x[i]).collect();
        let y: Vec<f64> = (0..n).map(|i| g_trial[i] - g[i]).collect();
        let sy = dot(&s, &y);
        if sy > 1e-16 {
            if pairs.len() == settings.memory {
                pairs.pop_front();
            }
            pairs.push_back((s, y, 1.0 / sy));
        }
        x.copy_from_slice(&trial);
        g.copy_from_slice(&g_trial);
        value = new_value;
    }
    let force = max_atom_norm(&g);
    Outcome {
        value,
        max_force: force,
        iterations: settings.max_iterations,
        converged: force < settings.max_force,
    }
}

/// The two-loop recursion: returns -H g for the implicit inverse Hessian H.
fn two_loop(g: &[f64], pairs: &VecDeque<(Vec<f64>, Vec<f64>, f64)>) -> Vec<f64> {
    let mut q: Vec<f64> = g.to_vec();
    let mut alphas = Vec::with_capacity(pairs.len());
    for (s, y, rho) in pairs.iter().rev() {
        let a = rho * dot(s, &q);
        q.iter_mut().zip(y).for_each(|(qi, yi)| *qi -= a * yi);
        alphas.push(a);
    }
    if let Some((s, y, _)) = pairs.back() {
        let gamma = dot(s, y) / dot(y, y);
        q.iter_mut().for_each(|qi| *qi *= gamma);
    }
    for ((s, y, rho), a) in pairs.iter().zip(alphas.iter().rev()) {
        let b = rho * dot(y, &q);
        q.iter_mut().zip(s).for_each(|(qi, si)| *qi += (a - b) * si);
    }
    q.iter_mut().for_each(|qi| *qi = -*qi);
    q
}

#[cfg(test)]
mod tests {
    use super::*;

    // Rosenbrock's function has its minimum 0 at (1, 1) (Rosenbrock, Comput. J. 3 (1960) 175).
    #[test]
    fn finds_the_rosenbrock_minimum() {
        let mut x = vec![-1.2, 1.0, 0.0];
        let out = lbfgs(
            &mut x,
            Settings {
                max_force: 1e-9,
                ..Settings::default()
            },
            |p, g| {
                let (a, b) = (p[0], p[1]);
                g[0] = -2.0 * (1.0 - a) - 400.0 * a * (b - a * a);
                g[1] = 200.0 * (b - a * a);
                g[2] = 0.0;
                (1.0 - a).powi(2) + 100.0 * (b - a * a).powi(2)
            },
        );
        assert!(out.converged, "{out:?}");
        assert!(
            (x[0] - 1.0).abs() < 1e-6 && (x[1] - 1.0).abs() < 1e-6,
            "{x:?}"
        );
    }
}
