//! Resource limits on input files: the largest mesh file and the most facets wetload reads.
//!
//! Owns the caps, their defaults, reading them from the environment, and reading a file
//! without ever holding more of it than the cap allows. Caps that never need tuning are
//! constants beside the code they guard: part names ([`crate::mesh::MAX_NAME_BYTES`]),
//! sidecar size ([`MAX_SIDECAR_BYTES`]), polygon work, JSON nesting (serde_json's 128
//! levels) and sweep steps.
//!
//! Does not decide what happens to a file that is too large: callers turn [`ReadError`]
//! into their own error naming the file.
//!
//! # Configuration
//!
//! Two environment variables, read once per process (so `calc`, `check` and a watcher
//! started by a service manager are configured the same way), both optional:
//!
//! | variable | meaning | default |
//! |---|---|---|
//! | `WETLOAD_MAX_FILE_SIZE` | largest mesh file read, bytes; a suffix `K`, `M`, `G` (or `KiB`, `MiB`, `GiB`) means powers of 1024 | 4 GiB |
//! | `WETLOAD_MAX_FACETS` | most facets a mesh may have (after polygons are triangulated), at most [`FACETS_CEILING`] | 50 000 000 |
//!
//! A value that cannot be read is a usage error (exit status 2) naming the variable.

use std::fs;
use std::io::{self, Read};
use std::path::Path;
use std::sync::OnceLock;

use thiserror::Error;

/// Default cap on a mesh file's size: 4 GiB.
pub const DEFAULT_MAX_FILE_BYTES: u64 = 4 << 30;

/// Default cap on the facets of one mesh: 50 million.
pub const DEFAULT_MAX_FACETS: usize = 50_000_000;

/// The largest facet cap that may be set: 2^28 (268 million facets, a 13 GB binary
/// STL). The topology numbers facets and corners in 32 bits with room for flag bits.
pub const FACETS_CEILING: usize = 1 << 28;

/// Cap on a sidecar's size: 16 MiB, thousands of times a large hand-written sidecar.
pub const MAX_SIDECAR_BYTES: u64 = 16 << 20;

/// Environment variable that sets [`Limits::max_file_bytes`].
pub const ENV_MAX_FILE_SIZE: &str = "WETLOAD_MAX_FILE_SIZE";

/// Environment variable that sets the snapshot store's size cap (bytes, with K, M, G…;
/// unset: the store's default, 1 GiB).
pub const ENV_SNAPSHOT_CAP: &str = "WETLOAD_SNAPSHOT_CAP";

/// The snapshot store's size cap set by [`ENV_SNAPSHOT_CAP`] (`None`: not set).
pub fn snapshot_cap() -> Result<Option<u64>, LimitsError> {
    match std::env::var_os(ENV_SNAPSHOT_CAP) {
        None => Ok(None),
        Some(v) => {
            let value = v.to_string_lossy().into_owned();
            parse_size(&value).map(Some).ok_or(LimitsError {
                variable: ENV_SNAPSHOT_CAP,
                value,
            })
        }
    }
}

/// Environment variable that sets [`Limits::max_facets`].
pub const ENV_MAX_FACETS: &str = "WETLOAD_MAX_FACETS";

/// The caps applied to mesh files.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Limits {
    /// Largest mesh file read, bytes.
    pub max_file_bytes: u64,
    /// Most facets a mesh may have.
    pub max_facets: usize,
}

impl Default for Limits {
    fn default() -> Limits {
        Limits {
            max_file_bytes: DEFAULT_MAX_FILE_BYTES,
            max_facets: DEFAULT_MAX_FACETS,
        }
    }
}

/// An environment variable whose value cannot be used.
#[derive(Debug, Error, Clone, PartialEq, Eq)]
#[error(
    "{variable}={value:?} cannot be used: give a whole number greater than 0{}",
    if *.variable == ENV_MAX_FILE_SIZE || *.variable == ENV_SNAPSHOT_CAP { " of bytes, optionally with K, M or G (powers of 1024), e.g. 8G" } else { " and at most 268435456, e.g. 100000000" }
)]
pub struct LimitsError {
    pub variable: &'static str,
    pub value: String,
}

impl Limits {
    /// The limits given by the environment (defaults for variables not set).
    pub fn from_env() -> Result<Limits, LimitsError> {
        let get = |name: &str| std::env::var_os(name).map(|v| v.to_string_lossy().into_owned());
        Limits::from_values(get(ENV_MAX_FILE_SIZE), get(ENV_MAX_FACETS))
    }

    /// The limits given by the values of the two variables (`None`: not set).
    pub fn from_values(
        file_size: Option<String>,
        facets: Option<String>,
    ) -> Result<Limits, LimitsError> {
        let mut limits = Limits::default();
        if let Some(value) = file_size {
            limits.max_file_bytes = parse_size(&value).ok_or(LimitsError {
                variable: ENV_MAX_FILE_SIZE,
                value,
            })?;
        }
        if let Some(value) = facets {
            limits.max_facets = value
                .trim()
                .replace('_', "")
                .parse::<usize>()
                .ok()
                .filter(|&n| n > 0 && n <= FACETS_CEILING)
                .ok_or(LimitsError {
                    variable: ENV_MAX_FACETS,
                    value,
                })?;
        }
        Ok(limits)
    }
}

/// `123`, `64K`, `512MiB`, `8G` … as bytes (powers of 1024); `None` for anything else or 0.
fn parse_size(text: &str) -> Option<u64> {
    let t = text.trim().replace('_', "");
    let digits = t.find(|c: char| !c.is_ascii_digit()).unwrap_or(t.len());
    let (number, suffix) = t.split_at(digits);
    let shift = match suffix.trim().to_ascii_lowercase().as_str() {
        "" | "b" => 0,
        "k" | "kib" => 10,
        "m" | "mib" => 20,
        "g" | "gib" => 30,
        "t" | "tib" => 40,
        _ => return None,
    };
    let n: u64 = number.parse().ok()?;
    n.checked_mul(1u64 << shift).filter(|&b| b > 0)
}

/// The limits of this process: from the environment, read on first use; the defaults when
/// the environment cannot be read (the binary refuses such a value before any work).
pub fn current() -> Limits {
    static LIMITS: OnceLock<Limits> = OnceLock::new();
    *LIMITS.get_or_init(|| Limits::from_env().unwrap_or_default())
}

/// `1.5 GiB`, `20 MiB`, `900 bytes`: a size for messages.
pub fn human_bytes(n: u64) -> String {
    const UNITS: [(&str, u32); 4] = [("TiB", 40), ("GiB", 30), ("MiB", 20), ("KiB", 10)];
    for (unit, shift) in UNITS {
        if n >= 1 << shift {
            let v = n as f64 / (1u64 << shift) as f64;
            return if v.fract() == 0.0 {
                format!("{v} {unit}")
            } else {
                format!("{v:.1} {unit}")
            };
        }
    }
    format!("{n} bytes")
}

/// Why a capped read did not return the file.
#[derive(Debug)]
pub enum ReadError {
    /// The file could not be opened or read.
    Io(io::Error),
    /// The file holds more than `limit` bytes (`len`: its size when it was opened, or the
    /// bytes seen before reading stopped when it grew while being read).
    TooLarge { len: u64, limit: u64 },
}

/// Opens a regular file of at most `limit` bytes (checked before anything is read);
/// returns it with its size.
///
/// The kind of file is judged twice: from the path's metadata before the open (so a
/// device is never opened at all), and from the opened handle after it, because another
/// file can be renamed over the name in between. The open itself never waits: a FIFO
/// swapped in at that moment is opened without blocking (`O_NONBLOCK`) and then refused
/// like any other non-regular file.
pub fn open_capped(path: &Path, limit: u64) -> Result<(fs::File, u64), ReadError> {
    let not_regular = |meta: &fs::Metadata| {
        ReadError::Io(io::Error::other(if meta.is_dir() {
            "it is a folder, not a file"
        } else {
            "it is not a regular file (a pipe, socket or device); wetload reads regular files only"
        }))
    };
    let meta = fs::metadata(path).map_err(ReadError::Io)?;
    if !meta.is_file() {
        return Err(not_regular(&meta));
    }
    let mut options = fs::OpenOptions::new();
    options.read(true);
    #[cfg(unix)]
    {
        use std::os::unix::fs::OpenOptionsExt;
        options.custom_flags(libc::O_NONBLOCK);
    }
    let file = options.open(path).map_err(ReadError::Io)?;
    let meta = file.metadata().map_err(ReadError::Io)?;
    if !meta.is_file() {
        return Err(not_regular(&meta));
    }
    let len = meta.len();
    if len > limit {
        return Err(ReadError::TooLarge { len, limit });
    }
    Ok((file, len))
}

/// Reads a whole file, refusing one larger than `limit` bytes before reading it, and
/// never holding more than `limit + 1` bytes of one that grows while it is read.
///
/// Only regular files are read: a FIFO or a device named like a mesh would block or never
/// end, so it is refused (see [`open_capped`]).
pub fn read_capped(path: &Path, limit: u64) -> Result<Vec<u8>, ReadError> {
    let (file, len) = open_capped(path, limit)?;
    read_rest_capped(file, len, limit, Vec::new())
}

/// The rest of an opened file of `len` bytes (see [`open_capped`]) after the bytes already
/// `read` from it, appended to them; never more than `limit + 1` bytes in all, and refused
/// when the file has grown past `limit` while it was read.
pub fn read_rest_capped(
    file: fs::File,
    len: u64,
    limit: u64,
    read: Vec<u8>,
) -> Result<Vec<u8>, ReadError> {
    // The size on disk sizes the buffer only after it has passed the cap.
    let mut bytes = read;
    bytes.reserve(
        usize::try_from(len)
            .unwrap_or(0)
            .saturating_sub(bytes.len()),
    );
    file.take(limit.saturating_add(1).saturating_sub(bytes.len() as u64))
        .read_to_end(&mut bytes)
        .map_err(ReadError::Io)?;
    if bytes.len() as u64 > limit {
        return Err(ReadError::TooLarge {
            len: bytes.len() as u64,
            limit,
        });
    }
    Ok(bytes)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sizes_read_with_binary_suffixes() {
        assert_eq!(parse_size("1000"), Some(1000));
        assert_eq!(parse_size("64K"), Some(65_536));
        assert_eq!(parse_size(" 512 MiB "), Some(512 * 1_048_576));
        assert_eq!(parse_size("8g"), Some(8 * 1_073_741_824));
        assert_eq!(parse_size("1_000"), Some(1000));
        for bad in [
            "",
            "0",
            "-1",
            "1.5G",
            "12 parsecs",
            "G",
            "99999999999999999999T",
        ] {
            assert_eq!(parse_size(bad), None, "{bad}");
        }
    }

    #[test]
    fn limits_from_values() {
        assert_eq!(Limits::from_values(None, None), Ok(Limits::default()));
        let l = Limits::from_values(Some("2G".into()), Some("1_000_000".into())).expect("valid");
        assert_eq!(l.max_file_bytes, 2 << 30);
        assert_eq!(l.max_facets, 1_000_000);
        let e = Limits::from_values(Some("lots".into()), None).expect_err("refused");
        assert_eq!(e.variable, ENV_MAX_FILE_SIZE);
        assert!(
            e.to_string().contains("WETLOAD_MAX_FILE_SIZE=\"lots\""),
            "{e}"
        );
        let e = Limits::from_values(None, Some("0".into())).expect_err("refused");
        assert!(e.to_string().contains("WETLOAD_MAX_FACETS"), "{e}");
        let top = FACETS_CEILING.to_string();
        assert!(Limits::from_values(None, Some(top.clone())).is_ok());
        let e = Limits::from_values(None, Some(format!("{top}1"))).expect_err("refused");
        assert!(e.to_string().contains("at most 268435456"), "{e}");
        assert_eq!(FACETS_CEILING, 268_435_456);
    }

    #[test]
    fn human_sizes() {
        assert_eq!(human_bytes(DEFAULT_MAX_FILE_BYTES), "4 GiB");
        assert_eq!(human_bytes(MAX_SIDECAR_BYTES), "16 MiB");
        assert_eq!(human_bytes(1536), "1.5 KiB");
        assert_eq!(human_bytes(100), "100 bytes");
    }

    #[test]
    fn capped_reads() {
        let dir = tempfile::tempdir().expect("temp dir");
        let p = dir.path().join("a.stl");
        fs::write(&p, vec![7u8; 1000]).expect("write");
        assert_eq!(read_capped(&p, 1000).expect("at the cap").len(), 1000);
        assert!(matches!(
            read_capped(&p, 999),
            Err(ReadError::TooLarge {
                len: 1000,
                limit: 999
            })
        ));
        assert!(matches!(
            read_capped(&dir.path().join("none.stl"), 10),
            Err(ReadError::Io(e)) if e.kind() == io::ErrorKind::NotFound
        ));
        let folder = dir.path().join("folder.stl");
        fs::create_dir(&folder).expect("mkdir");
        assert!(matches!(
            read_capped(&folder, 10),
            Err(ReadError::Io(e)) if e.to_string().contains("folder")
        ));
    }
}
