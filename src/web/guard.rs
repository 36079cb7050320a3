//! Panics in the page: the hook that reports them, and a deliberate one for
//! the recovery test.
//!
//! A panic aborts the wasm instance (the call that panicked throws a
//! `RuntimeError: unreachable`), so the page must make a new instance; see
//! `www/guard.js`. The hook reports the message on the console and leaves it
//! in `globalThis.ratebookPanic`, outside the dead instance, for the page
//! to show.

use wasm_bindgen::prelude::*;

/// The global that holds the last panic's message.
const PANIC_GLOBAL: &str = "ratebookPanic";

/// The global a test sets to `true` to arm [`test_panic`].
const ARM_GLOBAL: &str = "ratebookArmTestPanic";

/// Install the panic hook (once per instance, at start).
pub fn install() {
    std::panic::set_hook(Box::new(|info| {
        let message = format!("ratebook: internal error: {info}");
        let _ = js_sys::Reflect::set(&js_sys::global(), &JsValue::from_str(PANIC_GLOBAL), &JsValue::from_str(&message));
        web_sys::console::error_1(&JsValue::from_str(&message));
    }));
}

/// Panic on purpose, to test that the page survives a panic; `solve` calls
/// it first, so an armed test makes the page's next solve panic. Inert
/// (returns `false`) unless the test has set `globalThis.ratebookArmTestPanic` to
/// `true`, which nothing in the page, a sheet or a link can do; the flag is
/// cleared before the panic, so one arming makes one panic.
#[wasm_bindgen(js_name = testPanic)]
pub fn test_panic() -> bool {
    let global = js_sys::global();
    let key = JsValue::from_str(ARM_GLOBAL);
    let armed = js_sys::Reflect::get(&global, &key).map(|v| v == JsValue::TRUE).unwrap_or(false);
    if !armed {
        return false;
    }
    let _ = js_sys::Reflect::set(&global, &key, &JsValue::FALSE);
    panic!("deliberate test panic");
}
