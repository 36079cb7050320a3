//! Order conditions of every tableau in the registry, checked on all rooted
//! trees up to the method's order (Butcher's theory: a method has order p iff
//! `Σ b_i Φ_i(τ) = 1/γ(τ)` for every rooted tree τ with |τ| ≤ p; Hairer,
//! Nørsett & Wanner, *Solving ODEs I*, 2nd ed., Sec. II.2, Theorem 2.13), and
//! of each continuous extension (`Σ B_i(θ) Φ_i(τ) = θ^|τ|/γ(τ)` for |τ| ≤ p*,
//! same book, Sec. II.6, Theorem 6.1). Every entry of every family (explicit,
//! θ-methods, Radau, Rosenbrock) is checked against its family's data and
//! its stability function.

use ratebook::solve::methods;
use ratebook::solve::methods::Family;
use ratebook::solve::stability::{StabilityFunction, C64};
use ratebook::solve::tableau::{ErrorEstimate, Tableau};

/// A rooted tree as the list of its children (each an index into the list).
struct Tree {
    order: usize,
    children: Vec<usize>,
    gamma: f64,
}

/// All rooted trees up to `max` nodes, children in non-increasing index order
/// so that each tree appears once.
fn trees(max: usize) -> Vec<Tree> {
    let mut all = vec![Tree { order: 1, children: vec![], gamma: 1.0 }];
    for n in 2..=max {
        // Forests of total order n - 1 with non-increasing indices.
        let mut forests: Vec<Vec<usize>> = Vec::new();
        fn extend(all: &[Tree], left: usize, max_idx: usize, cur: &mut Vec<usize>, out: &mut Vec<Vec<usize>>) {
            if left == 0 {
                out.push(cur.clone());
                return;
            }
            for i in (0..=max_idx.min(all.len() - 1)).rev() {
                if all[i].order <= left {
                    cur.push(i);
                    extend(all, left - all[i].order, i, cur, out);
                    cur.pop();
                }
            }
        }
        let len = all.len();
        extend(&all, n - 1, len - 1, &mut Vec::new(), &mut forests);
        for f in forests {
            let gamma = n as f64 * f.iter().map(|&c| all[c].gamma).product::<f64>();
            all.push(Tree { order: n, children: f, gamma });
        }
    }
    all
}

/// Elementary weights Φ_i(τ) for every tree, over the stages of (c, a).
fn weights(all: &[Tree], a: &[Vec<f64>]) -> Vec<Vec<f64>> {
    let s = a.len();
    let mut phi: Vec<Vec<f64>> = Vec::new();
    for t in all {
        let mut v = vec![1.0; s];
        for &c in &t.children {
            for i in 0..s {
                let sum: f64 = a[i].iter().enumerate().map(|(j, aij)| aij * phi[c][j]).sum();
                v[i] *= sum;
            }
        }
        phi.push(v);
    }
    phi
}

fn rows(t: &Tableau) -> Vec<Vec<f64>> {
    t.a.iter().map(|r| r.to_vec()).collect()
}

#[test]
fn tree_counts_match_known_sequence() {
    // Numbers of rooted trees with n nodes: 1, 1, 2, 4, 9, 20, 48, 115 (OEIS A000081; from memory).
    let all = trees(8);
    let counts: Vec<usize> = (1..=8).map(|n| all.iter().filter(|t| t.order == n).count()).collect();
    assert_eq!(counts, vec![1, 1, 2, 4, 9, 20, 48, 115]);
}

#[test]
fn every_registry_tableau_meets_its_order_conditions() {
    let all = trees(9);
    for m in methods() {
        let Some(tab) = m.tableau() else { continue };
        assert_eq!(tab.order, m.order, "{}", m.id);
        assert_eq!(tab.stages() as u32, m.stages, "{}", m.id);
        assert_eq!(tab.fsal(), m.fsal, "{}", m.id);
        // c_i = Σ_j a_ij (row-sum condition).
        for (i, r) in tab.a.iter().enumerate() {
            assert!((r.iter().sum::<f64>() - tab.c[i]).abs() < 1e-14, "{} row {i}", m.id);
        }
        let a = rows(tab);
        let phi = weights(&all, &a);
        let p = tab.order as usize;
        for (k, t) in all.iter().enumerate().filter(|(_, t)| t.order <= p) {
            let v: f64 = tab.b.iter().zip(&phi[k]).map(|(b, f)| b * f).sum();
            assert!((v - 1.0 / t.gamma).abs() < 1e-13, "{}: tree {k} of order {} gives {v}, want {}", m.id, t.order, 1.0 / t.gamma);
        }
        // The order is exactly p: some tree of order p + 1 fails.
        let fails = all.iter().enumerate().filter(|(_, t)| t.order == p + 1).any(|(k, t)| {
            let v: f64 = tab.b.iter().zip(&phi[k]).map(|(b, f)| b * f).sum();
            (v - 1.0 / t.gamma).abs() > 1e-10
        });
        assert!(fails, "{} has order above {p}", m.id);
        // Embedded solution: its order is the registry's embedded order.
        if let (ErrorEstimate::Embedded { b_hat }, Some(q)) = (&tab.error, m.embedded_order) {
            for (k, t) in all.iter().enumerate().filter(|(_, t)| t.order <= q as usize) {
                let v: f64 = b_hat.iter().zip(&phi[k]).map(|(b, f)| b * f).sum();
                assert!((v - 1.0 / t.gamma).abs() < 1e-13, "{} embedded: tree {k}", m.id);
            }
        }
        if let ErrorEstimate::Blended { e5, e3 } = &tab.error {
            // b − e5 has order 5 and b − e3 has order 3 (Hairer, Nørsett & Wanner, Sec. II.10).
            for (w, q) in [(e5, 5usize), (e3, 3usize)] {
                for (k, _) in all.iter().enumerate().filter(|(_, t)| t.order <= q) {
                    let v: f64 = w.iter().zip(&phi[k]).map(|(e, f)| e * f).sum();
                    assert!(v.abs() < 1e-12, "{} error weights order {q}: tree {k} gives {v}", m.id);
                }
            }
        }
    }
}

#[test]
fn every_continuous_extension_meets_its_order_conditions() {
    let all = trees(8);
    for m in methods() {
        let Some(tab) = m.tableau() else { continue };
        let (p, extra) = tab.dense.weights(tab.b, tab.fsal());
        let mut a = rows(tab);
        for (_, row) in &extra {
            a.push(row.clone());
        }
        // Pad the extra stage row sums: c of extra stages = row sums.
        for (j, (c, row)) in extra.iter().enumerate() {
            assert!((row.iter().sum::<f64>() - c).abs() < 1e-13, "{} extra stage {j}", m.id);
        }
        let a: Vec<Vec<f64>> = a.into_iter().map(|r| r.into_iter().collect()).collect();
        let phi = weights(&all, &a);
        let q = tab.dense_order() as usize;
        assert_eq!(q as u32, m.dense_order, "{}", m.id);
        for theta in [0.25f64, 0.5, 0.8, 1.0] {
            for (k, t) in all.iter().enumerate().filter(|(_, t)| t.order <= q) {
                let v: f64 = p
                    .iter()
                    .zip(&phi[k])
                    .map(|(pi, f)| pi.iter().enumerate().map(|(j, c)| c * theta.powi(j as i32 + 1)).sum::<f64>() * f)
                    .sum();
                let want = theta.powi(t.order as i32) / t.gamma;
                assert!((v - want).abs() < 1e-12, "{} dense θ={theta}: tree {k} (order {}) gives {v}, want {want}", m.id, t.order);
            }
        }
        // At θ = 1 the extension gives the step's result: B_i(1) = b_i.
        for (i, pi) in p.iter().enumerate() {
            let b = tab.b.get(i).copied().unwrap_or(0.0);
            assert!((pi.iter().sum::<f64>() - b).abs() < 1e-12, "{} B_{i}(1)", m.id);
        }
    }
}

#[test]
fn registry_entries_are_documented_and_unique() {
    let ms = methods();
    for (i, m) in ms.iter().enumerate() {
        assert!(!m.reference.is_empty() && !m.summary.is_empty() && !m.name.is_empty(), "{}", m.id);
        assert!(ms[..i].iter().all(|o| o.id != m.id), "duplicate id {}", m.id);
        assert_eq!(m.adaptive, m.embedded_order.is_some(), "{}", m.id);
    }
    for id in ["euler", "heun", "midpoint", "rk4", "bogacki-shampine-3", "dormand-prince-5", "dormand-prince-8", "auto"] {
        assert!(ratebook::solve::method(id).is_some(), "{id}");
    }
}

/// The Taylor coefficients `c_0 … c_k` of `R(z)` at 0, from its values on
/// the circle `|z| = 1/2` (the discrete Cauchy integral over 64 points; for
/// the rational `R` of the implicit methods, whose poles lie beyond
/// `|z| = 2`, the aliasing error is below `4^-64`).
fn taylor(f: &StabilityFunction, k: usize) -> Vec<f64> {
    let (r, n) = (0.5, 64);
    let values: Vec<C64> = (0..n).map(|j| f.eval(C64::from_polar(r, 2.0 * std::f64::consts::PI * j as f64 / n as f64))).collect();
    (0..=k)
        .map(|m| {
            let sum: C64 = values.iter().enumerate().map(|(j, v)| v * C64::from_polar(1.0, -2.0 * std::f64::consts::PI * (j * m) as f64 / n as f64)).sum();
            sum.re / n as f64 / r.powi(m as i32)
        })
        .collect()
}

#[test]
fn every_registry_entry_matches_its_family() {
    // Every entry of every family: the registry's facts are its family's
    // data, and the stability function R(z) of a method of order p agrees
    // with e^z through z^p (the order conditions on y' = λy; Hairer &
    // Wanner, Solving ODEs II, 2nd ed., Sec. IV.3) and not at z^(p+1).
    for m in methods() {
        let f = m.family;
        assert_eq!(f.order(), m.order, "{}", m.id);
        let (stages, embedded) = match f {
            Family::Explicit(t) => (t.stages() as u32, m.embedded_order),
            Family::Theta(t) => {
                assert!(t.id == m.id, "{}", m.id);
                (1, None)
            }
            Family::Radau(r) => {
                assert!(r.id == m.id, "{}", m.id);
                (r.c.len() as u32, Some(r.embedded_order))
            }
            Family::Rosenbrock(r) => {
                assert!(r.id == m.id, "{}", m.id);
                (r.stages() as u32, Some(r.embedded_order))
            }
        };
        assert_eq!((stages, embedded), (m.stages, m.embedded_order), "{}", m.id);
        assert_eq!(m.implicit, !matches!(f, Family::Explicit(_)), "{}", m.id);
        // The controller's order: the blended or embedded estimate's, one
        // above the embedded order for the stiff pairs, the order itself
        // for the fixed-step methods.
        let want = match f {
            Family::Explicit(t) if t.error_order > 0 => t.error_order,
            _ => m.embedded_order.map_or(m.order, |q| q + 1),
        };
        assert_eq!(m.error_order(), want, "{}", m.id);
        let p = m.order as usize;
        let c = taylor(&m.stability_function(), p + 1);
        let mut factorial = 1.0;
        for (k, ck) in c.iter().enumerate() {
            if k > 0 {
                factorial *= k as f64;
            }
            let d = (ck - 1.0 / factorial).abs();
            if k <= p {
                assert!(d < 1e-11, "{}: z^{k} coefficient {ck}, want 1/{k}!", m.id);
            } else {
                assert!(d > 1e-6 / factorial, "{}: R(z) agrees with e^z beyond order {p}", m.id);
            }
        }
    }
}

#[test]
fn stability_limits_on_the_negative_real_axis() {
    // Euler's disc |1 + z| ≤ 1 and Heun's and the midpoint rule's
    // 1 + z + z²/2 meet the negative real axis at −2 (analytic); RK4's
    // 1 + z + z²/2 + z³/6 + z⁴/24 = 1 at z = −2.78529356340528162353
    // (mpmath.findroot at 30 digits). The implicit methods hold the whole
    // negative axis; the stiffness test does not watch them (limit 0).
    for (id, want) in [("euler", 2.0), ("heun", 2.0), ("midpoint", 2.0), ("rk4", 2.785293563405282)] {
        let got = ratebook::solve::method(id).unwrap().stability_limit();
        assert!((got - want).abs() < 1e-8, "{id}: {got}");
    }
    for m in methods() {
        if m.implicit {
            assert_eq!(m.stability_limit(), 0.0, "{}", m.id);
            assert_eq!(m.stability_function().largest_stable_step(C64::new(-1e6, 0.0)), None, "{}", m.id);
        } else {
            assert!(m.stability_limit() > 1.0, "{}", m.id);
        }
    }
}
