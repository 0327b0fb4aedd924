//! One sequential read of a file: every byte is hashed (SHA-256) and handed to a parser in the
//! same pass, so the digest in the report is the digest of exactly the bytes that were analysed.
//! Hashing runs on a second thread while the parser works on the same buffer.

use std::fs::File;
use std::io::{ErrorKind, Read};
use std::path::Path;

use sha2::{Digest, Sha256};

use super::error::{DataError, ProblemKind};

/// Bytes read per step; also how often progress is reported.
const CHUNK: usize = 8 << 20;
/// Below this many fresh bytes, hashing inline is cheaper than starting a thread.
const PARALLEL_MIN: usize = 256 << 10;

/// What the read established about the file.
#[derive(Debug, Clone, PartialEq, Eq)]
pub(crate) struct Digest256 {
    /// Lower-case hex SHA-256 of the bytes read.
    pub sha256: String,
    /// Number of bytes read.
    pub bytes: u64,
}

/// Opens `path`, or says why not, naming the file as the spec wrote it.
pub(crate) fn open(file: &str, path: &Path) -> Result<(File, u64), DataError> {
    let f = File::open(path).map_err(|e| {
        let err = unreadable(file, &e);
        if e.kind() == std::io::ErrorKind::NotFound {
            // The path is relative to the spec's folder, which is where it was looked for.
            err.with_hint(format!(
                "`data.file` is relative to the spec's folder; looked for {}",
                path.display()
            ))
        } else {
            err
        }
    })?;
    let len = f.metadata().map_err(|e| unreadable(file, &e))?.len();
    Ok((f, len))
}

pub(crate) fn unreadable(file: &str, e: &std::io::Error) -> DataError {
    DataError::one(
        file,
        ProblemKind::Unreadable,
        None,
        format!("cannot read the file: {e}"),
    )
}

/// A parser fed by [`stream`]: `(buffer, eof) -> bytes consumed`.
pub(crate) type Consume<'a> = dyn FnMut(&[u8], bool) -> Result<usize, DataError> + 'a;

/// Reads `reader` to its end. `consume(buffer, eof)` sees the unconsumed tail of the previous
/// step followed by the new bytes and returns how many bytes from the start it has consumed
/// (whole records); at `eof` it must consume everything. `progress(done, total)` is called after
/// every step.
pub(crate) fn stream<R: Read>(
    file: &str,
    mut reader: R,
    total: u64,
    progress: &mut dyn FnMut(u64, u64),
    consume: &mut Consume,
) -> Result<Digest256, DataError> {
    let mut buf = vec![0u8; CHUNK];
    let mut kept = 0usize;
    let mut hasher = Sha256::new();
    let mut done = 0u64;
    loop {
        // A record longer than half the buffer: grow, so that every step reads fresh bytes.
        if buf.len() - kept < CHUNK / 2 {
            buf.resize(kept + CHUNK, 0);
        }
        let mut filled = kept;
        let mut eof = false;
        while filled < buf.len() {
            match reader.read(&mut buf[filled..]) {
                Ok(0) => {
                    eof = true;
                    break;
                }
                Ok(n) => filled += n,
                Err(e) if e.kind() == ErrorKind::Interrupted => {}
                Err(e) => return Err(unreadable(file, &e)),
            }
        }
        let fresh = &buf[kept..filled];
        let whole = &buf[..filled];
        let consumed = if fresh.len() >= PARALLEL_MIN {
            let h = &mut hasher;
            std::thread::scope(|s| {
                s.spawn(move || h.update(fresh));
                consume(whole, eof)
            })?
        } else {
            hasher.update(fresh);
            consume(whole, eof)?
        };
        done += fresh.len() as u64;
        progress(done, total.max(done));
        if eof {
            break;
        }
        buf.copy_within(consumed..filled, 0);
        kept = filled - consumed;
    }
    let digest = hasher.finalize();
    let mut sha256 = String::with_capacity(64);
    for b in digest {
        sha256.push(char::from_digit(u32::from(b >> 4), 16).unwrap_or('0'));
        sha256.push(char::from_digit(u32::from(b & 15), 16).unwrap_or('0'));
    }
    Ok(Digest256 {
        sha256,
        bytes: done,
    })
}
