//! Entry points for the fuzz targets in `fuzz/` and for the regression test
//! that replays their findings (`tests/fuzz_regressions.rs`).
//!
//! Each function takes raw bytes, must never panic, hang or allocate without
//! bound, and checks the invariants the page relies on with `assert!`: an
//! assertion that fires is a finding, like a crash.
//!
//! Inputs of [`evaluate`] and [`solve`] start with a fixed header
//! ([`HEADER`] bytes, zero-padded when the input is shorter) that the
//! function decodes into evaluation points or run settings; the rest is the
//! sheet text (invalid UTF-8 replaced). [`sheet_input`] builds such inputs.

use crate::api;
use crate::emit::lower::module;
use crate::problem::Problem;
use crate::sheet::{self, Model};
use crate::solve::{self, methods, Settings, Status, Tolerance};

/// Length of the binary header in front of the sheet text.
pub const HEADER: usize = 32;

/// Step cap of fuzzed runs, so that one input costs bounded work.
pub const MAX_STEPS: u64 = 400;

/// A fuzz input: `header` (padded or cut to [`HEADER`] bytes) then `sheet`.
pub fn sheet_input(header: &[u8], sheet: &str) -> Vec<u8> {
    let mut v = vec![0u8; HEADER];
    let n = header.len().min(HEADER);
    v[..n].copy_from_slice(&header[..n]);
    v.extend_from_slice(sheet.as_bytes());
    v
}

fn split(data: &[u8]) -> ([u8; HEADER], String) {
    let mut h = [0u8; HEADER];
    let n = data.len().min(HEADER);
    h[..n].copy_from_slice(&data[..n]);
    (h, String::from_utf8_lossy(&data[n..]).into_owned())
}

/// Parse and compile arbitrary text as a sheet. A compiled model must be
/// consistent (initial state and names of the same length); an error must
/// point inside the text.
pub fn compile(data: &[u8]) {
    let text = String::from_utf8_lossy(data);
    match sheet::compile(&text) {
        Ok(m) => {
            assert_eq!(m.initial_state().len(), m.dim());
            assert!(m.dim() > 0);
        }
        Err(e) => {
            let lines = text.split('\n').count().max(1);
            assert!(e.line >= 1 && e.line <= lines + 1, "error line {} outside a {}-line sheet", e.line, lines);
            assert!(e.column >= 1);
            assert!(!e.message().is_empty());
        }
    }
}

/// A number from two header bytes: mostly ordinary magnitudes from 1e-32 to
/// 1e31 of either sign, sometimes a special value (NaN, ±∞, 0, extremes).
fn number(b0: u8, b1: u8) -> f64 {
    const SPECIAL: [f64; 8] = [f64::NAN, f64::INFINITY, f64::NEG_INFINITY, 0.0, 1e-300, 1e300, f64::MIN_POSITIVE, f64::MAX];
    if b0 >= 248 {
        return SPECIAL[(b0 - 248) as usize];
    }
    let exp = (b0 as i32 % 64) - 32;
    let mant = 1.0 + f64::from(b1 & 0x7f) / 128.0;
    let v = mant * 10f64.powi(exp);
    if b1 & 0x80 != 0 {
        -v
    } else {
        v
    }
}

/// Compile the sheet and evaluate everything it compiles to at a point from
/// the header: rates, helpers, events, switches, the Jacobian, `∂f/∂t`, the
/// non-finite explanation, and a parameter change; then emit the wasm
/// modules of the tapes. Returns the emitted modules for the caller to
/// validate. Evaluation must be deterministic.
pub fn evaluate(data: &[u8]) -> Vec<Vec<u8>> {
    let (h, text) = split(data);
    let Ok(mut m) = sheet::compile(&text) else { return Vec::new() };
    let n = m.dim();
    let raw = |k: usize| {
        let mut b = [0u8; 8];
        for (j, x) in b.iter_mut().enumerate() {
            *x = h[(8 + 8 * k + j) % HEADER];
        }
        f64::from_le_bytes(b)
    };
    // Mostly sensible points, sometimes raw bit patterns (NaN, ∞, subnormals).
    let wild = h[0] & 1 != 0;
    let t = if wild { raw(0) } else { number(h[1], h[2]) };
    let y: Vec<f64> = (0..n).map(|i| if wild { raw(i + 1) } else { number(h[3 + i % 5], h[4 + i % 5]) }).collect();
    let mut out = vec![0.0; n];
    m.rhs(t, &y, &mut out);
    let mut again = vec![0.0; n];
    m.rhs(t, &y, &mut again);
    let bits = |v: &[f64]| v.iter().map(|x| x.to_bits()).collect::<Vec<_>>();
    let nan_or = |v: &[f64]| v.iter().map(|x| if x.is_nan() { u64::MAX } else { x.to_bits() }).collect::<Vec<_>>();
    assert_eq!(nan_or(&out), nan_or(&again), "the rates are not deterministic");
    let nh = m.helper_names().len();
    let mut all = vec![0.0; n + nh];
    m.eval_all(t, &y, &mut all);
    assert_eq!(nan_or(&all[..n]), nan_or(&out), "eval_all and rhs disagree");
    let mut hv = vec![0.0; nh];
    m.helpers(t, &y, &mut hv);
    let mut ev = vec![0.0; m.events().len()];
    m.event_values(t, &y, &mut ev);
    let mut sv = vec![0.0; m.switch_count()];
    m.switch_values(t, &y, &mut sv);
    let mut jac = vec![0.0; n * n];
    assert!(m.jacobian(t, &y, &mut jac));
    let mut dfdt = vec![0.0; n];
    assert!(m.time_derivative(t, &y, &mut dfdt));
    let _ = m.explain_nonfinite(t, &y);
    let _ = bits(&jac);
    let mut modules = Vec::new();
    let progs = [m.rhs_program(), m.all_program(), m.event_program(), m.switch_program()];
    let kernels: Vec<(&str, &sheet::ir::Program)> = ["rhs", "all", "events", "switches"].into_iter().zip(progs).collect();
    if let Ok(bytes) = module(&kernels) {
        modules.push(bytes);
    }
    let jac_prog = m.jacobian_program().clone();
    let dfdt_prog = m.time_derivative_program().clone();
    if let Ok(bytes) = module(&[("jacobian", &jac_prog), ("dfdt", &dfdt_prog)]) {
        modules.push(bytes);
    }
    // A parameter change, folded and then live.
    if let Some(p) = m.params().first().map(|p| p.name.clone()) {
        let v = number(h[5], h[6]);
        assert!(m.set_param(&p, v));
        m.rhs(t, &y, &mut out);
        m.set_live(&[p.as_str()]);
        assert!(m.set_param(&p, number(h[6], h[7])));
        m.rhs(t, &y, &mut out);
        assert!(m.jacobian(t, &y, &mut jac));
    }
    modules
}

/// Run settings from the header. Byte 0 picks the method, byte 1 holds
/// flags; the caps are small so that one input is cheap.
fn settings(h: &[u8; HEADER], model: &Model) -> Settings {
    let all = methods();
    let m = &all[h[0] as usize % all.len()];
    let flags = h[1];
    let to = model.t0() + number(h[8], h[9]);
    let at = (flags & 2 != 0).then(|| {
        let k = (h[4] % 40) as usize;
        let span = to - model.t0();
        let mut pts: Vec<f64> = (0..k).map(|i| model.t0() + span * f64::from(h[(12 + i) % HEADER]) / 255.0).collect();
        if flags & 64 == 0 {
            pts.sort_by(|a, b| ((a - b) * span.signum()).total_cmp(&0.0));
        }
        pts
    });
    Settings {
        method: m.id.to_string(),
        to,
        step: (flags & 1 != 0 || !m.adaptive).then(|| number(h[10], h[11])),
        tol: Tolerance { relative: number(h[12], h[13]), absolute: number(h[14], h[15]) },
        at,
        max_steps: 1 + u64::from(h[2]) % MAX_STEPS,
        max_output: 2 + (h[3] % 64) as usize,
        max_events: (h[5] % 8) as usize,
        first_step: (flags & 8 != 0).then(|| number(h[16], h[17])),
        max_step: (flags & 16 != 0).then(|| number(h[18], h[19])),
        extrema: flags & 4 != 0,
    }
}

/// Compile the sheet and solve it with settings from the header, through
/// the same path as the JS API (report and JSON). Checks the caps: steps,
/// output points and recorded events stay within their limits, the
/// trajectory's columns have one value per output time, and a failed run
/// says why. The JS API's [`api::run_model`] differs only in how it builds
/// the settings.
pub fn solve(data: &[u8]) {
    let (h, text) = split(data);
    let Ok(mut m) = sheet::compile(&text) else { return };
    let s = settings(&h, &m);
    let (t0, y0) = (m.t0(), m.initial_state().to_vec());
    let Ok(run) = solve::solve(&mut m, t0, &y0, &s) else { return };
    assert!(run.stats.steps <= s.max_steps, "{} steps over the cap of {}", run.stats.steps, s.max_steps);
    let cap = s.at.as_ref().map_or(s.max_output, |a| a.len());
    assert!(run.t.len() <= cap, "{} output points over the cap of {}", run.t.len(), cap);
    assert_eq!(run.states.len(), m.dim());
    for col in run.states.iter().chain(&run.helpers) {
        assert_eq!(col.len(), run.t.len());
    }
    let stops = run.events.iter().filter(|e| m.events()[e.index].action == crate::problem::EventAction::Stop).count();
    assert!(run.events.len() <= s.max_events + stops, "{} events over the cap of {}", run.events.len(), s.max_events);
    // Rejected steps are bounded too: each shrinks h by a fixed factor.
    assert!(run.stats.rejected <= 200 * (run.stats.steps + 1), "{} rejected steps for {} accepted", run.stats.rejected, run.stats.steps);
    if let Status::Failed(e) = &run.status {
        assert!(!e.to_string().is_empty());
    }
    let report = api::report(&m, &s.method, run);
    let _ = serde_json::to_string(&report);
}
