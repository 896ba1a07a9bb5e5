//! Reading a whole file with a size cap, so that a device, a pipe or a huge file is never read
//! into memory past what the caller can use.

use std::path::Path;

/// Reads the file at `path` if it holds at most `cap` bytes; otherwise gives its size as text
/// (exact for a regular file, "more than `cap`" for a device or pipe, which is read no further
/// than `cap` + 1 bytes).
pub(crate) fn read_capped(path: &Path, cap: u64) -> std::io::Result<Result<Vec<u8>, String>> {
    use std::io::Read;
    let f = std::fs::File::open(path)?;
    let meta = f.metadata()?;
    if meta.is_file() && meta.len() > cap {
        return Ok(Err(format!("{} bytes", meta.len())));
    }
    let mut bytes = Vec::with_capacity(if meta.is_file() { meta.len() as usize } else { 0 });
    f.take(cap + 1).read_to_end(&mut bytes)?;
    if bytes.len() as u64 > cap {
        return Ok(Err(format!("more than {cap} bytes")));
    }
    Ok(Ok(bytes))
}
