//! Order conditions of every tableau in the registry, checked on all rooted
//! trees up to the method's order (Butcher's theory: a method has order p iff
//! `Σ b_i Φ_i(τ) = 1/γ(τ)` for every rooted tree τ with |τ| ≤ p; Hairer,
//! Nørsett & Wanner, *Solving ODEs I*, 2nd ed., Sec. II.2, Theorem 2.13), and
//! of each continuous extension (`Σ B_i(θ) Φ_i(τ) = θ^|τ|/γ(τ)` for |τ| ≤ p*,
//! same book, Sec. II.6, Theorem 6.1).

use ratebook::solve::methods;
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
        let Some(tab) = m.tableau else { continue };
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
        let Some(tab) = m.tableau else { continue };
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
