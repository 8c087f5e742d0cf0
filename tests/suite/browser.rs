//! The browser the play page's tests and its frame-rate bench drive: the
//! system's headless Chromium, found on the PATH. (The bench includes this
//! file by its path.)

use std::path::PathBuf;
use std::process::Command;

/// The browser, or a loud failure.
pub fn chromium() -> PathBuf {
    for name in ["chromium", "chromium-browser"] {
        if let Ok(out) = Command::new("sh")
            .args(["-c", &format!("command -v {name}")])
            .output()
            && out.status.success()
        {
            let p = String::from_utf8_lossy(&out.stdout).trim().to_string();
            if !p.is_empty() {
                return PathBuf::from(p);
            }
        }
    }
    panic!(
        "chromium is not installed: the play page's tests and bench need it (`apt-get install -y chromium`, as .ci/run does)"
    );
}
