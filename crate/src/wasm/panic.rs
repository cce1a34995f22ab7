//! Panics in the browser. A panic in wasm32 aborts: the call throws an opaque
//! `RuntimeError: unreachable`. The hook below keeps the panic's message so the page can
//! show it (and still logs it to the console with its location), instead of leaving the
//! user with a page that silently stopped.

use std::sync::Mutex;
use wasm_bindgen::prelude::*;

static LAST_PANIC: Mutex<Option<String>> = Mutex::new(None);

/// Installs the hook; called from the module's start function.
pub(crate) fn install() {
    std::panic::set_hook(Box::new(|info| {
        if let Ok(mut slot) = LAST_PANIC.lock() {
            *slot = Some(info.to_string());
        }
        console_error_panic_hook::hook(info);
    }));
}

/// The message of the last panic, once; `undefined` if there was none. After a panic the
/// module's memory may be inconsistent: the page should offer a reload.
#[wasm_bindgen(js_name = takePanicMessage)]
pub fn take_panic_message() -> Option<String> {
    LAST_PANIC.lock().ok().and_then(|mut slot| slot.take())
}
