//! A limited-memory BFGS minimiser (Nocedal, Math. Comp. 35 (1980) 773; Liu & Nocedal, Math.
//! Program. 45 (1989) 503) with a backtracking Armijo line search (Nocedal & Wright, *Numerical
//! Optimization*, 2nd ed. 2006, algorithms 7.4 and 3.1).
//!
//! It knows nothing about chemistry: it minimises any smooth function given as a closure that
//! returns the value and fills the gradient, optionally with a preconditioner (a closure that
//! applies P⁻¹) as the initial inverse Hessian. Every buffer, including the ring of correction
//! pairs, is allocated before the first step, so a long run allocates no more than a short one. Convergence is judged on the largest per-atom force
//! (groups of three coordinates), the measure a chemist reads.

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
    /// Calls of the function, line-search trials included: the cost of the run.
    pub evaluations: usize,
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

/// The correction pairs (s, y, 1/sᵀy) in a ring of `memory` preallocated slots, so that an
/// iteration allocates nothing however long the run.
struct History {
    n: usize,
    s: Vec<f64>,
    y: Vec<f64>,
    rho: Vec<f64>,
    alpha: Vec<f64>,
    /// Room for P⁻¹y when a preconditioner scales the initial inverse Hessian.
    temp: Vec<f64>,
    /// Slot of the oldest pair, and how many pairs are stored.
    first: usize,
    len: usize,
}

impl History {
    fn new(n: usize, memory: usize) -> History {
        let memory = memory.max(1);
        History {
            n,
            s: vec![0.0; n * memory],
            y: vec![0.0; n * memory],
            rho: vec![0.0; memory],
            alpha: vec![0.0; memory],
            temp: vec![0.0; n],
            first: 0,
            len: 0,
        }
    }

    fn capacity(&self) -> usize {
        self.rho.len()
    }

    /// Slot of the k-th stored pair, oldest first.
    fn slot(&self, k: usize) -> usize {
        (self.first + k) % self.capacity()
    }

    fn pair(&self, k: usize) -> (&[f64], &[f64], f64) {
        let t = self.slot(k);
        let (s, y) = (
            &self.s[t * self.n..][..self.n],
            &self.y[t * self.n..][..self.n],
        );
        (s, y, self.rho[t])
    }

    fn clear(&mut self) {
        self.len = 0;
    }

    /// Stores s = new_x - x and y = new_g - g if the curvature sᵀy is positive (otherwise the
    /// pair would spoil the descent direction), dropping the oldest pair when full.
    fn push(&mut self, x: &[f64], new_x: &[f64], g: &[f64], new_g: &[f64]) {
        let sy: f64 = (0..self.n)
            .map(|i| (new_x[i] - x[i]) * (new_g[i] - g[i]))
            .sum();
        if sy <= 1e-16 {
            return;
        }
        let t = if self.len == self.capacity() {
            let t = self.first;
            self.first = (self.first + 1) % self.capacity();
            t
        } else {
            self.len += 1;
            self.slot(self.len - 1)
        };
        let n = self.n;
        let s = &mut self.s[t * n..][..n];
        let y = &mut self.y[t * n..][..n];
        for i in 0..n {
            s[i] = new_x[i] - x[i];
            y[i] = new_g[i] - g[i];
        }
        self.rho[t] = 1.0 / sy;
    }

    /// The two-loop recursion: writes -H g into `dir` for the implicit inverse Hessian H, whose
    /// initial guess is γ I, or γ P⁻¹ with the preconditioner's P⁻¹ (γ = sᵀy / yᵀP⁻¹y from the
    /// newest pair; Nocedal & Wright 2006, eq. 7.20 with a preconditioned H0).
    fn direction(&mut self, g: &[f64], dir: &mut [f64], precondition: Option<&mut Precondition>) {
        dir.copy_from_slice(g);
        for k in (0..self.len).rev() {
            let (s, y, rho) = self.pair(k);
            let a = rho * dot(s, dir);
            dir.iter_mut().zip(y).for_each(|(q, yi)| *q -= a * yi);
            let slot = self.slot(k);
            self.alpha[slot] = a;
        }
        if let Some(solve) = precondition {
            solve(dir);
            if self.len > 0 {
                let t = self.slot(self.len - 1);
                let y = &self.y[t * self.n..][..self.n];
                self.temp.copy_from_slice(y);
                solve(&mut self.temp);
                let (s, y, _) = self.pair(self.len - 1);
                let gamma = dot(s, y) / dot(y, &self.temp);
                dir.iter_mut().for_each(|q| *q *= gamma);
            }
        } else if self.len > 0 {
            let (s, y, _) = self.pair(self.len - 1);
            let gamma = dot(s, y) / dot(y, y);
            dir.iter_mut().for_each(|q| *q *= gamma);
        }
        for k in 0..self.len {
            let (s, y, rho) = self.pair(k);
            let b = rho * dot(y, dir);
            let a = self.alpha[self.slot(k)];
            dir.iter_mut().zip(s).for_each(|(q, si)| *q += (a - b) * si);
        }
        dir.iter_mut().for_each(|q| *q = -*q);
    }
}

/// Applies P⁻¹ in place for a symmetric positive definite preconditioner P whose scale is that
/// of the function's Hessian, so that -P⁻¹g is a sensible first step.
pub type Precondition<'a> = dyn FnMut(&mut [f64]) + 'a;

/// Minimises `f` from `x` in place. All buffers are allocated once before the first iteration.
pub fn lbfgs(
    x: &mut [f64],
    settings: Settings,
    f: impl FnMut(&[f64], &mut [f64]) -> f64,
) -> Outcome {
    minimise(x, settings, f, None)
}

/// [`lbfgs`] with a preconditioner: the initial inverse Hessian of every two-loop recursion is
/// γ P⁻¹ instead of γ I, and steps without curvature pairs go to -P⁻¹g.
pub fn lbfgs_preconditioned(
    x: &mut [f64],
    settings: Settings,
    f: impl FnMut(&[f64], &mut [f64]) -> f64,
    precondition: &mut Precondition,
) -> Outcome {
    minimise(x, settings, f, Some(precondition))
}

fn minimise(
    x: &mut [f64],
    settings: Settings,
    mut f: impl FnMut(&[f64], &mut [f64]) -> f64,
    mut precondition: Option<&mut Precondition>,
) -> Outcome {
    let n = x.len();
    let mut g = vec![0.0; n];
    let mut evaluations = 1;
    let mut value = f(x, &mut g);
    let mut history = History::new(n, settings.memory);
    let mut dir = vec![0.0; n];
    let mut trial = vec![0.0; n];
    let mut g_trial = vec![0.0; n];
    for iteration in 0..settings.max_iterations {
        let force = max_atom_norm(&g);
        if force < settings.max_force {
            return Outcome {
                value,
                max_force: force,
                iterations: iteration,
                evaluations,
                converged: true,
            };
        }
        history.direction(&g, &mut dir, precondition.as_deref_mut());
        let mut slope = dot(&dir, &g);
        if slope >= 0.0 {
            // Curvature information went stale: restart from (preconditioned) steepest descent.
            history.clear();
            history.direction(&g, &mut dir, precondition.as_deref_mut());
            slope = dot(&dir, &g);
        }
        // Without curvature pairs and without a preconditioner nothing fixes the scale: move the
        // atom with the largest force by 0.1 length units.
        let mut step = if history.len == 0 && precondition.is_none() {
            0.1 / force.max(1e-12)
        } else {
            1.0
        };
        let accepted = loop {
            for i in 0..n {
                trial[i] = x[i] + step * dir[i];
            }
            let v = f(&trial, &mut g_trial);
            evaluations += 1;
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
                evaluations,
                converged: false,
            };
        };
        history.push(x, &trial, &g, &g_trial);
        x.copy_from_slice(&trial);
        g.copy_from_slice(&g_trial);
        value = new_value;
    }
    let force = max_atom_norm(&g);
    Outcome {
        value,
        max_force: force,
        iterations: settings.max_iterations,
        evaluations,
        converged: force < settings.max_force,
    }
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

    // With P equal to the Hessian of a quadratic, -P⁻¹g is Newton's step: one step to the
    // minimum whatever the conditioning (Nocedal & Wright 2006, section 3.3).
    #[test]
    fn an_exact_preconditioner_solves_a_quadratic_in_one_step() {
        let stiffness: Vec<f64> = (0..30).map(|i| 10f64.powi(i % 5)).collect();
        let quadratic = |p: &[f64], g: &mut [f64]| {
            let mut e = 0.0;
            for ((v, gi), k) in p.iter().zip(g.iter_mut()).zip(&stiffness) {
                e += 0.5 * k * (v - 1.0).powi(2);
                *gi = k * (v - 1.0);
            }
            e
        };
        let settings = Settings {
            max_force: 1e-8,
            ..Settings::default()
        };
        let mut x = vec![0.0; 30];
        let plain = lbfgs(&mut x, settings, quadratic);
        let mut x = vec![0.0; 30];
        let mut newton = |v: &mut [f64]| v.iter_mut().zip(&stiffness).for_each(|(vi, k)| *vi /= k);
        let out = lbfgs_preconditioned(&mut x, settings, quadratic, &mut newton);
        assert!(out.converged && plain.converged);
        assert_eq!(out.iterations, 1);
        assert!(plain.iterations > 5, "{plain:?}");
        assert!(x.iter().all(|v| (v - 1.0).abs() < 1e-12));
    }
}
