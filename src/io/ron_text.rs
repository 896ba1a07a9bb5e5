//! Reading RON files (setups, sweeps): the size-capped read and the parse, with errors that
//! name the file, and the line and column of a parse error.

use super::setup_error::SetupError;
use serde::de::DeserializeOwned;
use std::path::Path;

/// Largest setup file read, 1 MiB. A real setup is a few hundred bytes (the bundled ones are
/// under 1 KiB), so this is far above any of them, and it keeps `noblescope run /dev/zero` from
/// reading until memory runs out.
pub const MAX_SETUP_BYTES: u64 = 1 << 20;

/// Parses `text` with `options`; `file` names it in errors.
pub fn parse<T: DeserializeOwned>(text: &str, file: &str, options: ron::Options) -> Result<T, SetupError> {
    options
        .from_str(text)
        .map_err(|e: ron::error::SpannedError| SetupError::Parse {
            file: file.into(),
            line: e.span.start.line,
            column: e.span.start.col,
            message: e.code.to_string(),
        })
}

/// The text of `path`, at most [`MAX_SETUP_BYTES`] of it (read through `take`, so a pipe or a
/// device such as `/dev/zero` is never read past the cap); a longer file is an error naming its
/// size, with `typical` (e.g. "a setup is a few hundred") beside the limit.
pub fn read_text(path: &Path, typical: &str) -> Result<String, SetupError> {
    let file = path.display().to_string();
    let read = |message: String| SetupError::Read {
        file: file.clone(),
        message,
    };
    let bytes = super::capped_read::read_capped(path, MAX_SETUP_BYTES)
        .map_err(|e| read(e.to_string()))?
        .map_err(|size| {
            read(format!(
                "size {size} is out of range; allowed: at most {MAX_SETUP_BYTES} bytes ({typical})"
            ))
        })?;
    String::from_utf8(bytes).map_err(|_| read("stream did not contain valid UTF-8".into()))
}
