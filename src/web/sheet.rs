//! wasm export of the sheet reader: `readSheet`.

use wasm_bindgen::prelude::*;

use super::{api_error, text_arg, to_js};
use crate::{api::ApiError, sheet::outline};

/// What `sheet` says, read by the solver's own parser (see
/// `sheet::outline`): `{ start, independent, params: [{ name, value, line,
/// literal: { index, text } | undefined }], states, helpers }`. Throws an `Error`
/// with `line` and `column` for a sheet that cannot be read, and a plain
/// `Error` when `sheet` is not a string.
#[wasm_bindgen(js_name = readSheet)]
pub fn read_sheet(sheet: JsValue) -> Result<JsValue, JsValue> {
    let sheet = text_arg(&sheet, "the sheet")?;
    let o = outline::outline(&sheet).map_err(|e| api_error(ApiError::Sheet(e)))?;
    to_js(&o)
}
