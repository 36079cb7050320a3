//! The 20-state model of the sheet benchmark, as a sheet and hand-written,
//! shared by the native benchmark (`examples/bench_sheet.rs`) and the wasm
//! one (`src/web/bench_emit.rs`): a rod of thermal nodes, heated at one end
//! by a pulsing source and losing heat to the surroundings (our own scenario).

/// Conduction `k`, loss `h`, surroundings `Ta`, source `p` and its pulse
/// frequency `w`, in the order of [`chain_rates`]' `c`.
pub const CHAIN_PARAMS: [f64; 5] = [0.8, 0.05, 20.0, 3.0, 0.7];

/// The chain of `n` nodes as a sheet, with the values of [`CHAIN_PARAMS`].
pub fn chain_sheet(n: usize) -> String {
    let [k, h, ta, p, w] = CHAIN_PARAMS;
    let mut s = format!("k = {k}\nh = {h}\nTa = {ta}\np = {p}\nw = {w}\n");
    for i in 1..=n {
        let left = if i == 1 { "T1".to_string() } else { format!("T{}", i - 1) };
        let right = if i == n { format!("T{n}") } else { format!("T{}", i + 1) };
        let src = if i == 1 { " + p*(1 + 0.5*sin(w*t))" } else { "" };
        s += &format!("dT{i}/dt = k*({left} - 2*T{i} + {right}) - h*(T{i} - Ta){src}\n");
        s += &format!("T{i}(0) = 20\n");
    }
    s
}

/// The chain's rates written by hand, with the parameters `c = [k, h, Ta, p, w]`.
#[inline(always)]
pub fn chain_rates(c: [f64; 5], t: f64, y: &[f64], dy: &mut [f64]) {
    let [k, h, ta, p, w] = c;
    let n = y.len();
    for i in 0..n {
        let l = y[i.saturating_sub(1)];
        let r = y[(i + 1).min(n - 1)];
        dy[i] = k * (l - 2.0 * y[i] + r) - h * (y[i] - ta);
    }
    dy[0] += p * (1.0 + 0.5 * (w * t).sin());
}
