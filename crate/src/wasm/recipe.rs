//! Recipe bindings: the page keeps its analysis as a [`Recipe`] (JSON); the core checks it,
//! writes it for download and packs it for share links ([`crate::io::pack_text`]).

use super::js_error;
use crate::io::{pack_text, unpack_text};
use crate::recipe::{ReadingStep, Recipe};
use wasm_bindgen::prelude::*;

/// Checks a recipe (JSON text) and returns it in the core's layout (pretty JSON), or an
/// error naming the field that is wrong.
#[wasm_bindgen(js_name = recipeNormalize)]
pub fn recipe_normalize(json: &str) -> Result<String, JsError> {
    Ok(Recipe::from_json(json).map_err(js_error)?.to_json())
}

/// An empty recipe (format, version, default reading step) as JSON.
#[wasm_bindgen(js_name = recipeEmpty)]
pub fn recipe_empty() -> String {
    Recipe::default().to_json()
}

/// The reading step for the page's reading options (as the `Dataset` constructor takes
/// them: absent, empty or `auto` = as the files say) as JSON.
#[wasm_bindgen(js_name = recipeReading)]
pub fn recipe_reading(
    length_unit: Option<String>,
    time_unit: Option<String>,
    dt: Option<String>,
) -> Result<String, JsError> {
    let given = |o: Option<String>| {
        o.map(|s| s.trim().to_string()).filter(|s| !s.is_empty() && !s.eq_ignore_ascii_case("auto"))
    };
    let mut step = ReadingStep::default();
    if let Some(u) = given(length_unit) {
        step.length_unit = Some(u.parse().map_err(|e: String| JsError::new(&e))?);
    }
    if let Some(u) = given(time_unit) {
        step.time_unit = Some(u.parse().map_err(|e: String| JsError::new(&e))?);
    }
    if let Some(d) = given(dt) {
        let value: f64 = d.parse().map_err(|_| {
            JsError::new(&format!("the time between snapshots must be a number, not '{d}'"))
        })?;
        step.dt = Some(value);
    }
    serde_json::to_string(&step).map_err(js_error)
}

/// The text after `#recipe=` in a share link: the checked recipe, compact, deflated and
/// base64url-encoded.
#[wasm_bindgen(js_name = recipeToFragment)]
pub fn recipe_to_fragment(json: &str) -> Result<String, JsError> {
    let recipe = Recipe::from_json(json).map_err(js_error)?;
    Ok(pack_text(&serde_json::to_string(&recipe).map_err(js_error)?))
}

/// The recipe carried by a share link's fragment (the text after `#recipe=`), checked, as
/// pretty JSON.
#[wasm_bindgen(js_name = recipeFromFragment)]
pub fn recipe_from_fragment(fragment: &str) -> Result<String, JsError> {
    let text = unpack_text(fragment).map_err(js_error)?;
    recipe_normalize(&text)
}
