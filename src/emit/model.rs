//! [`EmittedModel`]: a compiled sheet whose formulas run as emitted wasm.

use super::lower::{module, rk4_module};
use crate::problem::{EventSpec, NonFiniteCause, Problem};
use crate::sheet::ir::Program;
use crate::sheet::Model;
use std::sync::atomic::{AtomicBool, Ordering};
use std::borrow::BorrowMut;
use std::sync::OnceLock;

/// An emitted kernel as the solver calls it: `f(t, y, out, live)`, reading
/// the states at `y`, the live parameters at `live`, writing the results at
/// `out` (see [`lower`](super::lower)). On wasm32 a function pointer is an
/// index into the solver's function table, where the loader installs it.
pub type KernelFn = unsafe extern "C" fn(t: f64, y: *const f64, out: *mut f64, live: *const f64);

/// The emitted RK4 stepper ([`lower::rk4_module`](super::lower::rk4_module)):
/// `f(t, y, h, steps, live)` advances the states at `y` in place.
pub type Rk4Fn = unsafe extern "C" fn(t: f64, y: *mut f64, h: f64, steps: i32, live: *const f64);

/// What turns module bytes into callable kernels. Only the web layer can
/// provide one (natively there is no wasm engine), and it registers it once
/// with [`set_loader`].
#[derive(Clone, Copy, Debug)]
pub struct Loader {
    /// Compile and instantiate `bytes`, install its exports `names` and
    /// return their function pointers as addresses (on wasm32, indices into
    /// the solver's function table), in that order; `None` when the engine
    /// refuses (a Content-Security-Policy without `'wasm-unsafe-eval'`, or
    /// any error).
    ///
    /// # Safety contract
    /// Each returned address must be a function pointer to the export of
    /// that name of these `bytes`, with the export's own signature.
    pub load: fn(bytes: &[u8], names: &[&str]) -> Option<Vec<usize>>,
    /// Give back functions that will not be called again.
    pub release: fn(&[usize]),
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

/// The exports of one instantiated module, as function addresses; given back
/// when dropped.
#[derive(Debug)]
struct Kernels(Vec<usize>);

impl Kernels {
    /// Export `k` as a kernel.
    fn kernel(&self, k: usize) -> KernelFn {
        // SAFETY: every module loaded with `load` below for kernels holds
        // only kernels (`lower::module`); the loader's contract makes the
        // address a pointer to one.
        unsafe { std::mem::transmute::<usize, KernelFn>(self.0[k]) }
    }
}

impl Drop for Kernels {
    fn drop(&mut self) {
        if let Some(l) = LOADER.get() {
            (l.release)(&self.0);
        }
    }
}

/// Load and install the module `bytes`, with exports `names`.
fn load_bytes(bytes: &[u8], names: &[&str]) -> Option<Kernels> {
    let loader = LOADER.get()?;
    let fns = (loader.load)(bytes, names)?;
    (fns.len() == names.len() && fns.iter().all(|&f| f != 0)).then_some(Kernels(fns))
}

/// Emit, load and install one module holding `programs` as kernels under `names`.
fn load(names: &[&str], programs: &[&Program]) -> Option<Kernels> {
    if !available() {
        return None;
    }
    let named: Vec<(&str, &Program)> = names.iter().copied().zip(programs.iter().copied()).collect();
    load_bytes(&module(&named).ok()?, names)
}

/// A kernel ready to call: what it reads and writes, checked once.
#[derive(Clone, Copy, Debug)]
struct Direct {
    f: KernelFn,
    /// States it reads.
    dim: usize,
    /// Results it writes.
    outputs: usize,
    /// Its tape's live values. They stay at this address until the tapes are
    /// rebuilt, after which [`EmittedModel::reload`] makes new `Direct`s: a
    /// tape's slot array is allocated once and written in place.
    live: *const f64,
}

impl Direct {
    /// Kernel `f` emitted from `p`, for a model of `dim` states.
    fn new(f: KernelFn, p: &Program, dim: usize) -> Direct {
        // A tape of another shape never runs here: `run` refuses every call.
        let dim = if p.dim() == dim { dim } else { usize::MAX };
        Direct { f, dim, outputs: p.outputs().len(), live: p.live_values().as_ptr() }
    }

    /// Run at `(t, y)` into `out`; `false` (nothing run) when they are too short.
    fn run(&self, t: f64, y: &[f64], out: &mut [f64]) -> bool {
        if y.len() < self.dim || out.len() < self.outputs {
            return false;
        }
        // SAFETY: the kernel reads `dim` states and its tape's live values
        // (still at `live`) and writes `outputs` results; lengths checked.
        unsafe { (self.f)(t, y.as_ptr(), out.as_mut_ptr(), self.live) };
        true
    }
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
/// `∂f/∂t` get a second module the first time they are asked for, and the
/// helpers' gradients (their rates, for their peaks and troughs) a third.
pub struct EmittedModel<M: BorrowMut<Model> = Model> {
    model: M,
    main: Option<Kernels>,
    /// The main module's kernels, ready to call.
    direct: Vec<Direct>,
    derivatives: Option<Kernels>,
    derivative_direct: Vec<Direct>,
    /// Whether the derivative module was tried for the current tapes.
    derivatives_tried: bool,
    /// The RK4 stepper, once asked for; `None` inside when it could not be made.
    stepper: Option<Option<Kernels>>,
    /// The helpers' gradients (for their rates, which locate their peaks and
    /// troughs), once asked for; `None` inside when they could not be emitted.
    helper_gradients: Option<Option<(Kernels, Direct)>>,
    loads: u32,
    scratch: Vec<f64>,
    gradients: Vec<f64>,
}

impl<M: BorrowMut<Model>> EmittedModel<M> {
    /// Wrap `model` (a [`Model`] or a `&mut Model`), emitting its module
    /// when a loader is available.
    pub fn new(model: M) -> Self {
        let mut m = EmittedModel {
            model,
            main: None,
            direct: Vec::new(),
            derivatives: None,
            derivative_direct: Vec::new(),
            derivatives_tried: false,
            stepper: None,
            helper_gradients: None,
            loads: 0,
            scratch: Vec::new(),
            gradients: Vec::new(),
        };
        m.reload();
        m
    }

    fn reload(&mut self) {
        self.main = None;
        self.direct.clear();
        self.derivatives = None;
        self.derivative_direct.clear();
        self.derivatives_tried = false;
        self.stepper = None;
        self.helper_gradients = None;
        let m: &Model = self.model.borrow();
        self.main = load(&MAIN, &[m.rhs_program(), m.all_program(), m.event_program(), m.switch_program()]);
        self.loads += u32::from(self.main.is_some());
        if let Some(k) = &self.main {
            let programs = [m.rhs_program(), m.all_program(), m.event_program(), m.switch_program()];
            self.direct = programs.iter().enumerate().map(|(i, p)| Direct::new(k.kernel(i), p, m.dim())).collect();
        }
        self.scratch = vec![0.0; m.all_program().outputs().len()];
    }

    /// Whether the rates run as emitted wasm (rather than the interpreter).
    pub fn is_emitted(&self) -> bool {
        self.main.is_some()
    }

    /// How many modules were emitted and loaded for this model so far (per
    /// compilation of the sheet: one for the rates, one for the derivatives
    /// and one for the helpers' gradients, each when first needed).
    pub fn loads(&self) -> u32 {
        self.loads
    }

    /// The wrapped model.
    pub fn model(&self) -> &Model {
        self.model.borrow()
    }

    /// Unwrap the model.
    pub fn into_model(self) -> M {
        let EmittedModel { model, .. } = self;
        model
    }

    /// [`Model::set_param`]: for a live parameter no new module is needed;
    /// for any other the sheet recompiles and the module is emitted again.
    pub fn set_param(&mut self, name: &str, value: f64) -> bool {
        let live = self.model.borrow().live().iter().any(|l| l == name);
        let ok = self.model.borrow_mut().set_param(name, value);
        if ok && !live {
            self.reload();
        }
        ok
    }

    /// [`Model::set_live`], then a new module for the new tapes.
    pub fn set_live(&mut self, names: &[&str]) {
        self.model.borrow_mut().set_live(names);
        self.reload();
    }

    /// Run kernel `k` of the main module; `false` when it is not emitted or
    /// the lengths do not fit.
    fn run_main(&self, k: usize, t: f64, y: &[f64], out: &mut [f64]) -> bool {
        self.direct.get(k).is_some_and(|d| d.run(t, y, out))
    }

    /// Take `steps` steps of size `h` of the classical RK4 method from
    /// `(t, y)`, updating `y`, in one call of an emitted function that holds
    /// the stage loop and the formulas together (see
    /// [`lower::rk4_module`](super::lower::rk4_module) for the exact
    /// arithmetic). Returns `false`, with `y` untouched, when no such
    /// function can be emitted here or `y` is not `dim` long.
    pub fn rk4_steps(&mut self, t: f64, y: &mut [f64], h: f64, steps: u32) -> bool {
        if self.stepper.is_none() {
            let made = if self.main.is_some() {
                rk4_module(self.model.borrow().rhs_program()).ok().and_then(|b| load_bytes(&b, &["rk4"]))
            } else {
                None
            };
            self.loads += u32::from(made.is_some());
            self.stepper = Some(made);
        }
        let Some(Some(k)) = &self.stepper else { return false };
        if y.len() != self.model.borrow().dim() || steps > i32::MAX as u32 {
            return false;
        }
        // SAFETY: the module holds only `rk4` (`lower::rk4_module`), of type
        // `Rk4Fn`; it reads and writes `dim` states at `y` and reads the rate
        // tape's live values.
        unsafe {
            let f = std::mem::transmute::<usize, Rk4Fn>(k.0[0]);
            f(t, y.as_mut_ptr(), h, steps as i32, self.model.borrow().rhs_program().live_values().as_ptr());
        }
        true
    }

    /// Run derivative kernel `k` (0: the Jacobian, 1: `∂f/∂t`) into `out`,
    /// emitting their module on first use; `false` when it is not emitted or
    /// the lengths do not fit.
    fn run_derivative(&mut self, k: usize, t: f64, y: &[f64], out: &mut [f64]) -> bool {
        if !self.derivatives_tried && self.main.is_some() {
            self.derivatives_tried = true;
            let m: &mut Model = self.model.borrow_mut();
            let jac = m.jacobian_program().clone();
            let kernels = load(&DERIVATIVES, &[&jac, m.time_derivative_program()]);
            if let Some(ks) = &kernels {
                let dim = m.dim();
                let jac = Direct::new(ks.kernel(0), m.jacobian_program(), dim);
                self.derivative_direct = vec![jac, Direct::new(ks.kernel(1), m.time_derivative_program(), dim)];
                self.loads += 1;
            }
            self.derivatives = kernels;
        }
        self.derivative_direct.get(k).is_some_and(|d| d.run(t, y, out))
    }
}

impl<M: BorrowMut<Model>> EmittedModel<M> {
    /// The helpers' gradients at `(t, y)` into `self.gradients` through their
    /// own module, emitted on first use (after the main module, never
    /// without it); `false` when they do not run emitted.
    fn emitted_helper_gradients(&mut self, t: f64, y: &[f64]) -> bool {
        if self.helper_gradients.is_none() && self.main.is_some() {
            let m: &mut Model = self.model.borrow_mut();
            let dim = m.dim();
            let p = m.helper_gradient_program();
            let made = load(&["helper_gradients"], &[p]).map(|k| {
                let d = Direct::new(k.kernel(0), p, dim);
                (k, d)
            });
            self.loads += u32::from(made.is_some());
            self.helper_gradients = Some(made);
        }
        let Some(Some((_, d))) = &self.helper_gradients else { return false };
        self.gradients.resize(d.outputs, 0.0);
        d.run(t, y, &mut self.gradients)
    }
}

impl<M: BorrowMut<Model>> Problem for EmittedModel<M> {
    fn dim(&self) -> usize {
        self.model.borrow().dim()
    }

    fn state_names(&self) -> &[String] {
        self.model.borrow().state_names()
    }

    fn rhs(&mut self, t: f64, y: &[f64], dy: &mut [f64]) {
        if !self.run_main(0, t, y, dy) {
            self.model.borrow_mut().rhs(t, y, dy);
        }
    }

    fn jacobian(&mut self, t: f64, y: &[f64], jac: &mut [f64]) -> bool {
        self.run_derivative(0, t, y, jac) || self.model.borrow_mut().jacobian(t, y, jac)
    }

    fn time_derivative(&mut self, t: f64, y: &[f64], dfdt: &mut [f64]) -> bool {
        self.run_derivative(1, t, y, dfdt) || self.model.borrow_mut().time_derivative(t, y, dfdt)
    }

    fn helper_names(&self) -> &[String] {
        self.model.borrow().helper_names()
    }

    fn helpers(&mut self, t: f64, y: &[f64], out: &mut [f64]) {
        let mut scratch = std::mem::take(&mut self.scratch);
        if self.run_main(1, t, y, &mut scratch) {
            let dim = self.model.borrow().dim();
            for (o, v) in out.iter_mut().zip(&scratch[dim..]) {
                *o = *v;
            }
        } else {
            self.model.borrow_mut().helpers(t, y, out);
        }
        self.scratch = scratch;
    }

    fn helper_rates(&mut self, t: f64, y: &[f64], dy: &[f64], out: &mut [f64]) -> bool {
        if self.emitted_helper_gradients(t, y) {
            self.model.borrow().helper_rates_from(&self.gradients, dy, out);
            return true;
        }
        self.model.borrow_mut().helper_rates(t, y, dy, out)
    }

    fn events(&self) -> &[EventSpec] {
        self.model.borrow().events()
    }

    fn event_values(&mut self, t: f64, y: &[f64], out: &mut [f64]) {
        if !self.run_main(2, t, y, out) {
            self.model.borrow_mut().event_values(t, y, out);
        }
    }

    fn switch_count(&self) -> usize {
        self.model.borrow().switch_count()
    }

    fn switch_values(&mut self, t: f64, y: &[f64], out: &mut [f64]) {
        if !self.run_main(3, t, y, out) {
            self.model.borrow_mut().switch_values(t, y, out);
        }
    }

    fn explain_nonfinite(&mut self, t: f64, y: &[f64]) -> Option<NonFiniteCause> {
        // A diagnosis after the fact: the interpreter keeps every slot to look at.
        self.model.borrow_mut().explain_nonfinite(t, y)
    }
}
