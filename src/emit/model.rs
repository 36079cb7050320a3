//! [`EmittedModel`]: a compiled sheet whose formulas run as emitted wasm.

use super::lower::{module, EmitError};
use crate::problem::{EventSpec, NonFiniteCause, Problem};
use crate::sheet::ir::Program;
use crate::sheet::Model;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::OnceLock;

/// An emitted kernel as the solver calls it: `f(t, y, out, live)`, reading
/// the states at `y`, the live parameters at `live`, writing the results at
/// `out` (see [`lower`](super::lower)). On wasm32 a function pointer is an
/// index into the solver's function table, where the loader installs it.
pub type KernelFn = unsafe extern "C" fn(t: f64, y: *const f64, out: *mut f64, live: *const f64);

/// What turns module bytes into callable kernels. Only the web layer can
/// provide one (natively there is no wasm engine), and it registers it once
/// with [`set_loader`].
#[derive(Clone, Copy, Debug)]
pub struct Loader {
    /// Compile and instantiate `bytes`, install its exports `names` and
    /// return them in that order; `None` when the engine refuses (a
    /// Content-Security-Policy without `'wasm-unsafe-eval'`, or any error).
    ///
    /// # Safety contract
    /// Each returned pointer must call a function of type
    /// `(f64, i32, i32, i32) -> ()` that was produced by
    /// [`lower::module`](super::lower::module) from these `bytes`.
    pub load: fn(bytes: &[u8], names: &[&str]) -> Option<Vec<KernelFn>>,
    /// Give back kernels that will not be called again.
    pub release: fn(&[KernelFn]),
}

static LOADER: OnceLock<Loader> = OnceLock::new();
static ENABLED: AtomicBool = AtomicBool::new(true);

/// Register the loader. Returns `false` if one was registered already.
pub fn set_loader(loader: Loader) -> bool {
    LOADER.set(loader).is_ok()
}

/// Turn emitting on or off for models made from now on (on by default;
/// off means every model runs on the interpreter).
pub fn set_enabled(on: bool) {
    ENABLED.store(on, Ordering::Relaxed);
}

/// Whether models made now try to emit: a loader is registered and emitting
/// is enabled.
pub fn available() -> bool {
    LOADER.get().is_some() && ENABLED.load(Ordering::Relaxed)
}

/// Kernels of one instantiated module, given back when dropped.
#[derive(Debug)]
struct Kernels(Vec<KernelFn>);

impl Drop for Kernels {
    fn drop(&mut self) {
        if let Some(l) = LOADER.get() {
            (l.release)(&self.0);
        }
    }
}

/// Emit, load and install one module holding `programs` under `names`.
fn load(names: &[&str], programs: &[&Program]) -> Option<Kernels> {
    if !available() {
        return None;
    }
    let loader = LOADER.get()?;
    let named: Vec<(&str, &Program)> = names.iter().copied().zip(programs.iter().copied()).collect();
    let bytes = module(&named).map_err(|EmitError::TooLarge| ()).ok()?;
    let fns = (loader.load)(&bytes, names)?;
    (fns.len() == names.len()).then_some(Kernels(fns))
}

/// Where a kernel's results go: the number of outputs it writes.
fn fits(p: &Program, dim: usize, y: &[f64], out: &[f64]) -> bool {
    p.dim() == dim && y.len() >= dim && out.len() >= p.outputs().len()
}

/// Run kernel `f` of program `p` at `(t, y)` into `out`.
///
/// # Safety
/// `f` must be the kernel emitted from `p`, and [`fits`] must hold: it reads
/// `p.dim()` states, `p.n_live()` live values (from `p`'s own slots) and
/// writes `p.outputs().len()` results.
unsafe fn call(f: KernelFn, p: &Program, t: f64, y: &[f64], out: &mut [f64]) {
    f(t, y.as_ptr(), out.as_mut_ptr(), p.live_values().as_ptr())
}

const MAIN: [&str; 4] = ["rates", "all", "events", "switches"];
const DERIVATIVES: [&str; 2] = ["jacobian", "dfdt"];

/// A compiled sheet whose rates, helpers, events, switches and derivatives
/// run as one emitted wasm module per model, where a [`Loader`] is
/// registered; through the interpreter otherwise. Both give bit-identical
/// results.
///
/// The module is emitted when the model is made and again after any change
/// that recompiles the sheet (a new live set, a folded parameter). Live
/// parameters are read from the tapes' own memory, so changing one
/// ([`set_param`](Self::set_param)) needs no new module. The Jacobian and
/// `∂f/∂t` get a second module the first time they are asked for.
#[derive(Debug)]
pub struct EmittedModel {
    model: Model,
    main: Option<Kernels>,
    derivatives: Option<Kernels>,
    /// Whether the derivative module was tried for the current tapes.
    derivatives_tried: bool,
    loads: u32,
    scratch: Vec<f64>,
}

impl EmittedModel {
    /// Wrap `model`, emitting its module when a loader is available.
    pub fn new(model: Model) -> Self {
        let mut m = EmittedModel { model, main: None, derivatives: None, derivatives_tried: false, loads: 0, scratch: Vec::new() };
        m.reload();
        m
    }

    fn reload(&mut self) {
        self.main = None;
        self.derivatives = None;
        self.derivatives_tried = false;
        let m = &self.model;
        self.main = load(&MAIN, &[m.rhs_program(), m.all_program(), m.event_program(), m.switch_program()]);
        self.loads += u32::from(self.main.is_some());
        self.scratch = vec![0.0; m.all_program().outputs().len()];
    }

    /// Whether the rates run as emitted wasm (rather than the interpreter).
    pub fn is_emitted(&self) -> bool {
        self.main.is_some()
    }

    /// How many modules were emitted and loaded for this model so far (one
    /// for the rates and one for the derivatives per compilation of the sheet).
    pub fn loads(&self) -> u32 {
        self.loads
    }

    /// The wrapped model.
    pub fn model(&self) -> &Model {
        &self.model
    }

    /// Unwrap the model.
    pub fn into_model(self) -> Model {
        let EmittedModel { model, .. } = self;
        model
    }

    /// [`Model::set_param`]: for a live parameter no new module is needed;
    /// for any other the sheet recompiles and the module is emitted again.
    pub fn set_param(&mut self, name: &str, value: f64) -> bool {
        let live = self.model.live().iter().any(|l| l == name);
        let ok = self.model.set_param(name, value);
        if ok && !live {
            self.reload();
        }
        ok
    }

    /// [`Model::set_live`], then a new module for the new tapes.
    pub fn set_live(&mut self, names: &[&str]) {
        self.model.set_live(names);
        self.reload();
    }

    fn main_kernel(&self, k: usize) -> Option<KernelFn> {
        self.main.as_ref().map(|m| m.0[k])
    }

    fn derivative_kernel(&mut self, k: usize) -> Option<KernelFn> {
        if !self.derivatives_tried && self.main.is_some() {
            self.derivatives_tried = true;
            self.model.jacobian_program();
            self.model.time_derivative_program();
            let jac = self.model.jacobian_program().clone();
            let dfdt = self.model.time_derivative_program();
            self.derivatives = load(&DERIVATIVES, &[&jac, dfdt]);
            self.loads += u32::from(self.derivatives.is_some());
        }
        self.derivatives.as_ref().map(|d| d.0[k])
    }

    /// Run derivative kernel `k` (0: the Jacobian, 1: `∂f/∂t`) into `out`;
    /// `false` when it is not emitted or the lengths do not fit.
    fn run_derivative(&mut self, k: usize, t: f64, y: &[f64], out: &mut [f64]) -> bool {
        let dim = self.model.dim();
        let Some(f) = self.derivative_kernel(k) else { return false };
        let p = if k == 0 { self.model.jacobian_program() } else { self.model.time_derivative_program() };
        if !fits(p, dim, y, out) {
            return false;
        }
        // SAFETY: kernel `k` of the derivative module is emitted from this tape; lengths checked.
        unsafe { call(f, p, t, y, out) };
        true
    }
}

impl Problem for EmittedModel {
    fn dim(&self) -> usize {
        self.model.dim()
    }

    fn state_names(&self) -> &[String] {
        self.model.state_names()
    }

    fn rhs(&mut self, t: f64, y: &[f64], dy: &mut [f64]) {
        let p = self.model.rhs_program();
        match self.main_kernel(0) {
            // SAFETY: kernel 0 of the main module is emitted from this tape; `fits` checked the lengths.
            Some(f) if fits(p, self.model.dim(), y, dy) => unsafe { call(f, p, t, y, dy) },
            _ => self.model.rhs(t, y, dy),
        }
    }

    fn jacobian(&mut self, t: f64, y: &[f64], jac: &mut [f64]) -> bool {
        self.run_derivative(0, t, y, jac) || self.model.jacobian(t, y, jac)
    }

    fn time_derivative(&mut self, t: f64, y: &[f64], dfdt: &mut [f64]) -> bool {
        self.run_derivative(1, t, y, dfdt) || self.model.time_derivative(t, y, dfdt)
    }

    fn helper_names(&self) -> &[String] {
        self.model.helper_names()
    }

    fn helpers(&mut self, t: f64, y: &[f64], out: &mut [f64]) {
        let dim = self.model.dim();
        let p = self.model.all_program();
        match self.main_kernel(1) {
            Some(f) if fits(p, dim, y, &self.scratch) => {
                // SAFETY: kernel 1 of the main module is emitted from this tape; lengths checked.
                unsafe { call(f, p, t, y, &mut self.scratch) };
                for (o, v) in out.iter_mut().zip(&self.scratch[dim..]) {
                    *o = *v;
                }
            }
            _ => self.model.helpers(t, y, out),
        }
    }

    fn events(&self) -> &[EventSpec] {
        self.model.events()
    }

    fn event_values(&mut self, t: f64, y: &[f64], out: &mut [f64]) {
        let p = self.model.event_program();
        match self.main_kernel(2) {
            // SAFETY: kernel 2 of the main module is emitted from this tape; lengths checked.
            Some(f) if fits(p, self.model.dim(), y, out) => unsafe { call(f, p, t, y, out) },
            _ => self.model.event_values(t, y, out),
        }
    }

    fn switch_count(&self) -> usize {
        self.model.switch_count()
    }

    fn switch_values(&mut self, t: f64, y: &[f64], out: &mut [f64]) {
        let p = self.model.switch_program();
        match self.main_kernel(3) {
            // SAFETY: kernel 3 of the main module is emitted from this tape; lengths checked.
            Some(f) if fits(p, self.model.dim(), y, out) => unsafe { call(f, p, t, y, out) },
            _ => self.model.switch_values(t, y, out),
        }
    }

    fn explain_nonfinite(&mut self, t: f64, y: &[f64]) -> Option<NonFiniteCause> {
        // A diagnosis after the fact: the interpreter keeps every slot to look at.
        self.model.explain_nonfinite(t, y)
    }
}
