//! Turns a panic inside a third-party decoder into an error.
//!
//! Malformed files can reach code paths in format libraries that panic
//! instead of returning an error. A reader wraps each library call in
//! [`catch`], so a hostile file yields a clear message, never a crash; the
//! panic hook stays quiet for panics caught this way.

use std::cell::Cell;
use std::panic::{self, AssertUnwindSafe};
use std::sync::Once;

thread_local! {
    static CATCHING: Cell<u32> = const { Cell::new(0) };
}

static QUIET_HOOK: Once = Once::new();

/// Runs `f`; a panic becomes `Err(message)`.
pub fn catch<T>(f: impl FnOnce() -> T) -> Result<T, String> {
    install_quiet_hook();
    CATCHING.with(|c| c.set(c.get() + 1));
    let result = panic::catch_unwind(AssertUnwindSafe(f));
    CATCHING.with(|c| c.set(c.get() - 1));
    result.map_err(|payload| {
        let msg = payload
            .downcast_ref::<&str>()
            .map(|s| s.to_string())
            .or_else(|| payload.downcast_ref::<String>().cloned())
            .unwrap_or_else(|| "unknown failure".to_string());
        format!("the decoder failed on this data ({msg})")
    })
}

fn install_quiet_hook() {
    QUIET_HOOK.call_once(|| {
        let default = panic::take_hook();
        panic::set_hook(Box::new(move |info| {
            if CATCHING.with(|c| c.get()) == 0 {
                default(info);
            }
        }));
    });
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_panic_becomes_an_error_with_its_message() {
        let r: Result<(), String> = catch(|| panic!("index out of bounds"));
        assert!(r.unwrap_err().contains("index out of bounds"));
        assert_eq!(catch(|| 7), Ok(7));
    }
}
