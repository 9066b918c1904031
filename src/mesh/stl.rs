//! STL reader: format detection, binary STL and ASCII STL with several named solids.
//!
//! Owns the STL byte layouts and their errors; does not read files, weld vertices or use the
//! stored normals for geometry (they are passed on as read).
//!
//! Why not `stl_io`: it decides the format by sniffing text (so a binary file whose header
//! starts with `solid` can be misread), reads only the first ASCII solid, loses solid names
//! and parses ASCII as f32. It remains a cross-check in the tests and the benchmark.
//!
//! * Binary: an 80-byte header (ignored), a u32 little-endian facet count `n`, then `n`
//!   records of 50 bytes: normal and three vertices as 12 f32 little-endian, then a u16
//!   attribute (ignored). The file is binary exactly when its size is `84 + 50·n`. The f32
//!   values are widened to f64 exactly. Memory is sized from the file length, which then
//!   equals the header's claim, so a header claiming billions of facets allocates nothing.
//! * ASCII: `solid [name]`, then facets
//!   `facet normal nx ny nz / outer loop / vertex x y z (3 or more) / endloop / endfacet`,
//!   then `endsolid [anything]`; several solids may follow one another. Keywords are
//!   case-insensitive, tokens are separated by any white space (CRLF and tabs are fine),
//!   numbers are parsed as f64. The name is the rest of the `solid` line, trimmed. A facet
//!   loop with more than 3 vertices is triangulated like an OBJ polygon (see `polygon`),
//!   and its normal is repeated for each triangle. Anything else, including text after the
//!   last `endsolid` that is not another solid or a missing `endsolid`, is an error with
//!   its line number: a file cut short while being written must not pass as complete.

use std::path::Path;

use rayon::prelude::*;

use crate::hydro::{Extremes, Vec3};

use super::polygon::Triangulator;
use super::{
    Coords, Format, LineError, Mesh, MeshError, Part, PartsBuilder, Problem, SingleFacet,
    is_stale_normal, parse_coordinate, parse_f64, quote, stem_name, widen,
};

/// Size of the binary header plus the facet count.
const BINARY_HEADER: usize = 84;
/// Size of one binary facet record.
const BINARY_FACET: usize = 50;

/// Reads an STL file, binary or ASCII, from its bytes; `path` names the file in messages
/// and gives the part name where the file names none (its stem).
pub fn read_stl(path: &Path, bytes: &[u8]) -> Result<Mesh, MeshError> {
    read_stl_with(path, bytes, crate::limits::DEFAULT_MAX_FACETS)
}

/// Like [`read_stl`], with at most `max_facets` facets in an ASCII file (a binary file's
/// count is checked from its size by [`super::read_mesh_with`] before it is read).
pub fn read_stl_with(path: &Path, bytes: &[u8], max_facets: usize) -> Result<Mesh, MeshError> {
    let len = bytes.len() as u64;
    if BinaryStl::count(bytes, len).is_some() {
        return read_binary(path, bytes);
    }
    let claimed = claimed_count(bytes);
    let expected = claimed.map(|n| BINARY_HEADER as u64 + BINARY_FACET as u64 * u64::from(n));
    if !starts_with_solid(bytes) {
        return Err(match (claimed, expected) {
            (Some(claimed), Some(expected)) => MeshError::NotStl {
                path: path.to_path_buf(),
                claimed,
                expected,
                len,
            },
            _ => MeshError::TooShort {
                path: path.to_path_buf(),
                len,
            },
        });
    }
    match read_ascii(bytes, stem_name(path), max_facets) {
        Ok(Some(mesh)) => Ok(mesh),
        Ok(None) => Err(MeshError::Empty {
            path: path.to_path_buf(),
            format: Format::StlAscii,
        }),
        Err(e) => Err(match (claimed, expected) {
            (Some(claimed), Some(expected)) => MeshError::NeitherBinaryNorAscii {
                path: path.to_path_buf(),
                claimed,
                expected,
                len,
                line: e.line,
                problem: e.problem,
            },
            _ => e.with_path(path),
        }),
    }
}

/// Whether the text starts with the keyword `solid` (any case), after an optional UTF-8
/// byte-order mark and white space.
fn starts_with_solid(bytes: &[u8]) -> bool {
    let bytes = bytes.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(bytes);
    let start = bytes
        .iter()
        .position(|b| !b.is_ascii_whitespace())
        .unwrap_or(bytes.len());
    let rest = &bytes[start..];
    rest.len() >= 5
        && rest[..5].eq_ignore_ascii_case(b"solid")
        && rest.get(5).is_none_or(u8::is_ascii_whitespace)
}

/// Reads a binary STL whose size has been checked to be `84 + 50·n`.
fn read_binary(path: &Path, bytes: &[u8]) -> Result<Mesh, MeshError> {
    let mut builder = BinaryStl::new((bytes.len() - BINARY_HEADER) / BINARY_FACET);
    builder.push(&bytes[BINARY_HEADER..]);
    builder.finish(path)
}

/// A binary STL converted in pieces, so a caller can read the file a block at a time
/// instead of holding all its bytes: [`BinaryStl::new`] with the facet count from the
/// header (checked against the file size), [`BinaryStl::push`] with the records in order,
/// then [`BinaryStl::finish`]. [`read_stl`] pushes the whole file at once.
pub struct BinaryStl {
    facets: Vec<SingleFacet>,
    /// Whether each facet's stored normal is stale ([`is_stale_normal`]).
    stale: Vec<bool>,
    /// Facets converted so far.
    done: usize,
    /// The first facet with a non-finite coordinate, and the value.
    first_bad: Option<(usize, f32)>,
    /// The box and extreme vertices of the facets converted so far.
    extremes: Extremes,
}

/// The facet count a file's header claims (the u32 at byte 80), if it is that long.
fn claimed_count(header: &[u8]) -> Option<u32> {
    header
        .get(80..BINARY_HEADER)
        .map(|c| u32::from_le_bytes([c[0], c[1], c[2], c[3]]))
}

impl BinaryStl {
    /// Bytes of one facet record.
    pub const RECORD: usize = BINARY_FACET;
    /// Bytes of the header, facet count included.
    pub const HEADER: usize = BINARY_HEADER;

    /// The facet count of a file of `len` bytes that starts with `header` (its first
    /// [`Self::HEADER`] bytes or more), when the file is a binary STL by its size: exactly
    /// `84 + 50·n` bytes for the `n` its header claims. This is the reader's one rule for
    /// telling binary from ASCII.
    pub fn count(header: &[u8], len: u64) -> Option<u64> {
        let n = u64::from(claimed_count(header)?);
        (len == BINARY_HEADER as u64 + BINARY_FACET as u64 * n).then_some(n)
    }

    /// A builder for the file of `len` bytes that starts with `header`, when it is a binary
    /// STL by its size ([`Self::count`]); `None` when it is not. A count over `max_facets`
    /// is refused before anything is allocated.
    pub fn for_file(
        path: &Path,
        header: &[u8],
        len: u64,
        max_facets: usize,
    ) -> Result<Option<BinaryStl>, MeshError> {
        match Self::count(header, len) {
            None => Ok(None),
            Some(count) if count > max_facets as u64 => Err(MeshError::TooManyFacets {
                path: path.to_path_buf(),
                count,
                limit: max_facets,
            }),
            Some(count) => Ok(Some(BinaryStl::new(count as usize))),
        }
    }

    /// Room for `count` facets (the caller has checked the count against the file size).
    pub fn new(count: usize) -> BinaryStl {
        BinaryStl {
            facets: vec![[[0.0; 3]; 3]; count],
            stale: vec![false; count],
            done: 0,
            first_bad: None,
            extremes: Extremes::none(),
        }
    }

    /// Converts the next whole records of `bytes` (a multiple of [`Self::RECORD`] bytes,
    /// at most the facets still missing; anything beyond is ignored).
    pub fn push(&mut self, bytes: &[u8]) {
        // Fixed-size chunks over both threads; each facet is converted on its own, so the
        // result does not depend on the thread count. The first non-finite value is
        // reported. Each chunk also finds its box and extreme vertices, joined in order
        // below, so that the computation needs no pass of its own over the facets for them.
        const CHUNK: usize = 8192;
        let (records, _) = bytes.as_chunks::<BINARY_FACET>();
        let n = records.len().min(self.facets.len() - self.done);
        let start = self.done;
        let (now, ahead) = self.facets[start..].split_at_mut(n);
        let stale = &mut self.stale[start..start + n];
        // Meanwhile one thread touches the pages the next block's facets will fill: a
        // fresh page costs the kernel a fault, and faults taken on both threads at once
        // wait for each other (3–5 ms less in the read of 1.3 M facets).
        let next = n.min(ahead.len());
        let (chunks, ()) = rayon::join(
            || {
                now.par_chunks_mut(CHUNK)
                    .zip(stale.par_chunks_mut(CHUNK))
                    .zip(records[..n].par_chunks(CHUNK))
                    .enumerate()
                    .map(|(c, ((facets, stale), records))| {
                        convert(start + c * CHUNK, facets, stale, records)
                    })
                    .collect::<Vec<_>>()
            },
            || touch(&mut ahead[..next]),
        );
        for (bad, e) in chunks {
            if self.first_bad.is_none() {
                self.first_bad = bad;
            }
            self.extremes = Extremes::join(self.extremes, e);
        }
        self.done += n;
    }

    /// The mesh, one part named after the file's stem; an error for a file of no facets
    /// or with a non-finite coordinate. `path` names the file.
    pub fn finish(self, path: &Path) -> Result<Mesh, MeshError> {
        let count = self.facets.len();
        debug_assert_eq!(self.done, count, "every record pushed");
        if count == 0 {
            return Err(MeshError::Empty {
                path: path.to_path_buf(),
                format: Format::StlBinary,
            });
        }
        if let Some((i, value)) = self.first_bad {
            return Err(MeshError::NonFiniteBinary {
                path: path.to_path_buf(),
                facet: i + 1,
                count,
                value,
            });
        }
        Ok(Mesh {
            facets: Coords::Single(self.facets),
            parts: vec![Part {
                name: stem_name(path),
                facets: 0..count,
            }],
            normal_stale: Some(self.stale),
            vertex_ids: None,
            format: Format::StlBinary,
            extremes: Some(self.extremes),
        })
    }
}

fn f32_at(record: &[u8; BINARY_FACET], offset: usize) -> f32 {
    f32::from_le_bytes([
        record[offset],
        record[offset + 1],
        record[offset + 2],
        record[offset + 3],
    ])
}

/// A white-space tokenizer over the whole file that keeps the line number. Linear in the
/// file size whatever the line lengths.
struct Scanner<'a> {
    bytes: &'a [u8],
    pos: usize,
    /// 1-based line of the byte at `pos`.
    line: usize,
    /// Line of the last token read: where an unexpected end of file is reported.
    last_line: usize,
}

impl<'a> Scanner<'a> {
    fn new(bytes: &'a [u8]) -> Scanner<'a> {
        let bytes = bytes.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(bytes);
        Scanner {
            bytes,
            pos: 0,
            line: 1,
            last_line: 1,
        }
    }

    fn skip_space(&mut self) {
        while let Some(&b) = self.bytes.get(self.pos) {
            if !b.is_ascii_whitespace() {
                break;
            }
            if b == b'\n' {
                self.line += 1;
            }
            self.pos += 1;
        }
    }

    /// The next token and its line, or `None` at the end of the file.
    fn token(&mut self) -> Option<(&'a [u8], usize)> {
        self.skip_space();
        let start = self.pos;
        while self
            .bytes
            .get(self.pos)
            .is_some_and(|b| !b.is_ascii_whitespace())
        {
            self.pos += 1;
        }
        if self.pos == start {
            return None;
        }
        self.last_line = self.line;
        Some((&self.bytes[start..self.pos], self.line))
    }

    /// The next token, or an "unexpected end" error naming what was expected.
    fn require(&mut self, expected: &'static str) -> Result<(&'a [u8], usize), LineError> {
        self.token()
            .ok_or_else(|| LineError::new(self.last_line, Problem::UnexpectedEnd { expected }))
    }

    /// Consumes the keyword `keyword` (any case).
    fn keyword(&mut self, keyword: &[u8], expected: &'static str) -> Result<(), LineError> {
        let (token, line) = self.require(expected)?;
        if token.eq_ignore_ascii_case(keyword) {
            Ok(())
        } else {
            Err(unexpected(line, expected, token))
        }
    }

    /// The rest of the current line, trimmed; the scanner moves to the line's end.
    fn rest_of_line(&mut self) -> &'a [u8] {
        let start = self.pos;
        let end = self.bytes[start..]
            .iter()
            .position(|&b| b == b'\n')
            .map_or(self.bytes.len(), |i| start + i);
        self.pos = end;
        self.bytes[start..end].trim_ascii()
    }

    fn coordinate(&mut self) -> Result<f64, LineError> {
        let (token, line) = self.require("a coordinate")?;
        parse_coordinate(token).map_err(|p| LineError::new(line, p))
    }

    /// A normal component: any f64 the file holds, stored as f32 (never used for geometry,
    /// so a non-finite one is passed on, not refused).
    fn normal_component(&mut self) -> Result<f32, LineError> {
        let (token, line) = self.require("a normal component")?;
        parse_f64(token).map(|v| v as f32).ok_or_else(|| {
            LineError::new(
                line,
                Problem::BadNumber {
                    token: quote(token),
                },
            )
        })
    }
}

fn unexpected(line: usize, expected: &'static str, found: &[u8]) -> LineError {
    LineError::new(
        line,
        Problem::Unexpected {
            expected,
            found: quote(found),
        },
    )
}

/// Parses an ASCII STL; `Ok(None)` when it is well formed but holds no facet.
fn read_ascii(bytes: &[u8], stem: String, max_facets: usize) -> Result<Option<Mesh>, LineError> {
    let mut s = Scanner::new(bytes);
    let mut parts = PartsBuilder::new(stem, true).with_max_facets(max_facets);
    let mut ring: Vec<[f64; 3]> = Vec::new();
    let mut triangles: Vec<[usize; 3]> = Vec::new();
    let mut triangulator = Triangulator::default();
    let mut solids = 0usize;
    loop {
        let Some((token, line)) = s.token() else {
            if solids == 0 {
                return Err(LineError::new(
                    s.last_line,
                    Problem::UnexpectedEnd {
                        expected: "`solid`",
                    },
                ));
            }
            break;
        };
        if !token.eq_ignore_ascii_case(b"solid") {
            return Err(unexpected(line, "`solid` (or the end of the file)", token));
        }
        solids += 1;
        parts
            .select(&String::from_utf8_lossy(s.rest_of_line()))
            .map_err(|p| LineError::new(line, p))?;
        loop {
            let (token, line) = s.require("`facet` or `endsolid`")?;
            if token.eq_ignore_ascii_case(b"endsolid") {
                s.rest_of_line(); // the name after endsolid is often missing or different
                break;
            }
            if !token.eq_ignore_ascii_case(b"facet") {
                return Err(unexpected(line, "`facet` or `endsolid`", token));
            }
            s.keyword(b"normal", "`normal`")?;
            let normal = [
                s.normal_component()?,
                s.normal_component()?,
                s.normal_component()?,
            ];
            s.keyword(b"outer", "`outer`")?;
            s.keyword(b"loop", "`loop`")?;
            ring.clear();
            let loop_line = loop {
                let (token, line) = s.require("`vertex` or `endloop`")?;
                if token.eq_ignore_ascii_case(b"endloop") {
                    break line;
                }
                if !token.eq_ignore_ascii_case(b"vertex") {
                    return Err(unexpected(line, "`vertex` or `endloop`", token));
                }
                // A loop of n vertices makes n − 2 triangles: stop one of absurd length
                // before it outgrows the facet limit.
                if ring.len() >= parts.room().saturating_add(2) {
                    return Err(LineError::new(
                        line,
                        Problem::TooManyFacets {
                            limit: parts.max_facets(),
                        },
                    ));
                }
                ring.push([s.coordinate()?, s.coordinate()?, s.coordinate()?]);
            };
            if ring.len() < 3 {
                return Err(LineError::new(
                    loop_line,
                    Problem::TooFewLoopVertices { count: ring.len() },
                ));
            }
            s.keyword(b"endfacet", "`endfacet`")?;
            if let [a, b, c] = ring[..] {
                parts
                    .push([a, b, c], normal)
                    .map_err(|p| LineError::new(loop_line, p))?;
            } else {
                triangles.clear();
                triangulator
                    .triangulate(&ring, &mut triangles)
                    .map_err(|p| LineError::new(loop_line, p))?;
                for t in &triangles {
                    parts
                        .push([ring[t[0]], ring[t[1]], ring[t[2]]], normal)
                        .map_err(|p| LineError::new(loop_line, p))?;
                }
            }
        }
    }
    Ok(parts.finish(Format::StlAscii))
}

/// Converts `records` into `facets` (the first of them facet `first` of the file) and
/// judges their stored normals (`stale`): the first non-finite coordinate, and the
/// facets' box and extreme vertices.
fn convert(
    first: usize,
    facets: &mut [SingleFacet],
    stale: &mut [bool],
    records: &[[u8; BINARY_FACET]],
) -> (Option<(usize, f32)>, Extremes) {
    let mut bad = None;
    let mut e = Extremes::none();
    for (i, ((facet, stale), r)) in facets.iter_mut().zip(stale).zip(records).enumerate() {
        for (k, vertex) in facet.iter_mut().enumerate() {
            for (j, v) in vertex.iter_mut().enumerate() {
                let value = f32_at(r, 12 + 12 * k + 4 * j);
                if !value.is_finite() && bad.is_none() {
                    bad = Some((first + i, value));
                }
                *v = value;
            }
        }
        let wide = [widen(facet[0]), widen(facet[1]), widen(facet[2])];
        for p in wide {
            e.take(Vec3::from(p));
        }
        let normal = [f32_at(r, 0), f32_at(r, 4), f32_at(r, 8)];
        *stale = is_stale_normal(&wide, &normal);
    }
    (bad, e)
}

/// Writes to every page of `facets` (zeros, as allocated), so that they are mapped.
fn touch(facets: &mut [SingleFacet]) {
    const PER_PAGE: usize = 4096 / std::mem::size_of::<SingleFacet>();
    for f in facets.iter_mut().step_by(PER_PAGE) {
        // Hidden from the compiler, which may know the allocation is zeroed.
        f[0][0] = std::hint::black_box(0.0);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A binary STL of `facets` copies of one triangle, with the given header text.
    fn binary(header: &[u8], facets: u32, tri: [[f32; 3]; 3]) -> Vec<u8> {
        let mut b = vec![b' '; 80];
        b[..header.len()].copy_from_slice(header);
        b.extend_from_slice(&facets.to_le_bytes());
        for _ in 0..facets {
            for v in [[0.0, 0.0, 1.0], tri[0], tri[1], tri[2]] {
                for c in v {
                    b.extend_from_slice(&c.to_le_bytes());
                }
            }
            b.extend_from_slice(&[0, 0]);
        }
        b
    }

    const TRI: [[f32; 3]; 3] = [[0.1, 0.0, 0.0], [1.0, 0.0, 0.0], [0.0, 1.0, 0.0]];

    #[test]
    fn binary_with_solid_header_and_ten_facets_is_binary() {
        // 10 = 0x0A: the count's low byte is a newline right after a "solid" header, the
        // case that text sniffing misreads.
        let bytes = binary(b"solid part", 10, TRI);
        assert_eq!(bytes[80], b'\n');
        let m = read_stl(Path::new("dir/gate.stl"), &bytes).expect("binary");
        assert_eq!(m.format, Format::StlBinary);
        assert_eq!(m.facets.len(), 10);
        assert_eq!(m.parts.len(), 1);
        assert_eq!(m.parts[0].name, "gate");
        assert_eq!(m.parts[0].facets, 0..10);
        // f32 widened exactly: 0.1f32 is not 0.1f64.
        assert_eq!(m.facets.get(3)[0][0], f64::from(0.1f32));
        // Stored normals (0, 0, 1) agree with the winding's +z; one turned over disagrees.
        assert_eq!(m.normal_stale, Some(vec![false; 10]));
        let mut bytes = bytes;
        let z = 84 + 3 * 50 + 8;
        bytes[z..z + 4].copy_from_slice(&(-1.0f32).to_le_bytes());
        let m = read_stl(Path::new("dir/gate.stl"), &bytes).expect("binary");
        let stale = m.normal_stale.expect("stl");
        assert_eq!(stale.iter().filter(|&&s| s).count(), 1);
        assert!(stale[3]);
    }

    #[test]
    fn binary_header_claiming_billions_fails_fast() {
        // 100 bytes whose header claims 4e9 facets: neither binary (84 + 50·4e9 bytes)
        // nor text.
        let mut bytes = vec![0u8; 100];
        bytes[80..84].copy_from_slice(&4_000_000_000u32.to_le_bytes());
        let start = std::time::Instant::now();
        let err = read_stl(Path::new("huge.stl"), &bytes).expect_err("must be refused");
        assert!(start.elapsed().as_secs_f64() < 0.5);
        let msg = err.to_string();
        assert!(matches!(
            err,
            MeshError::NotStl {
                claimed: 4_000_000_000,
                ..
            }
        ));
        assert!(msg.contains("huge.stl"), "{msg}");
        assert!(msg.contains("200000000084 bytes, file has 100"), "{msg}");
        // The same with a "solid" header: tried as ASCII, then refused as neither.
        bytes[..6].copy_from_slice(b"solid ");
        let err = read_stl(Path::new("huge.stl"), &bytes).expect_err("must be refused");
        let msg = err.to_string();
        assert!(
            msg.contains("neither a complete binary STL (header claims 4000000000 facets = 200000000084 bytes, file has 100) nor ASCII"),
            "{msg}"
        );
        assert!(msg.contains("huge.stl") && msg.contains("line 1"), "{msg}");
    }

    #[test]
    fn truncated_binary_is_refused() {
        let mut bytes = binary(b"exported by a CAD program", 3, TRI);
        bytes.truncate(bytes.len() - 7);
        let err = read_stl(Path::new("cut.stl"), &bytes).expect_err("must be refused");
        assert!(matches!(err, MeshError::NotStl { claimed: 3, .. }), "{err}");
        // Cut inside a "solid"-headed binary: the ASCII attempt fails as well.
        let mut bytes = binary(b"solid cut", 3, TRI);
        bytes.truncate(bytes.len() - 7);
        let err = read_stl(Path::new("cut.stl"), &bytes).expect_err("must be refused");
        assert!(
            matches!(
                err,
                MeshError::NeitherBinaryNorAscii {
                    claimed: 3,
                    expected: 234,
                    len: 227,
                    ..
                }
            ),
            "{err}"
        );
        let short = read_stl(Path::new("tiny.stl"), b"abc").expect_err("must be refused");
        assert!(matches!(short, MeshError::TooShort { len: 3, .. }));
        assert!(short.to_string().contains("tiny.stl"));
    }

    #[test]
    fn binary_non_finite_and_empty_are_refused() {
        let mut bad = TRI;
        bad[1][2] = f32::NAN;
        let err =
            read_stl(Path::new("nan.stl"), &binary(b"", 2, bad)).expect_err("must be refused");
        assert!(
            matches!(
                err,
                MeshError::NonFiniteBinary {
                    facet: 1,
                    count: 2,
                    ..
                }
            ),
            "{err}"
        );
        assert!(err.to_string().contains("nan.stl"));
        bad[1][2] = f32::INFINITY;
        assert!(read_stl(Path::new("inf.stl"), &binary(b"", 1, bad)).is_err());
        let err =
            read_stl(Path::new("none.stl"), &binary(b"", 0, TRI)).expect_err("must be refused");
        assert!(matches!(err, MeshError::Empty { .. }));
        assert!(err.to_string().contains("none.stl"));
        // A NaN normal is no error and not judged stale: normals are not geometry.
        let mut bytes = binary(b"", 1, TRI);
        bytes[84..88].copy_from_slice(&f32::NAN.to_le_bytes());
        let m = read_stl(Path::new("n.stl"), &bytes).expect("normals are not checked");
        assert_eq!(m.normal_stale, Some(vec![false]));
    }

    fn facet(normal: &str, verts: &[&str]) -> String {
        let mut s = format!("  facet normal {normal}\n    outer loop\n");
        for v in verts {
            s += &format!("      vertex {v}\n");
        }
        s + "    endloop\n  endfacet\n"
    }

    #[test]
    fn ascii_solid_without_name_takes_the_stem() {
        let text = format!(
            "solid\n{}endsolid\n",
            facet("0 0 1", &["0 0 0", "1 0 0", "0 1 0"])
        );
        let m = read_stl(Path::new("/x/plate.STL"), text.as_bytes()).expect("ascii");
        assert_eq!(m.format, Format::StlAscii);
        assert_eq!(m.parts.len(), 1);
        assert_eq!(m.parts[0].name, "plate");
    }

    #[test]
    fn ascii_keeps_f64_precision() {
        let text = format!(
            "solid p\n{}endsolid p\n",
            facet(
                "0 0 1",
                &["0.1 0.2 0.3", "1e-17 1 0", "0 1 123456.789012345"]
            )
        );
        let m = read_stl(Path::new("p.stl"), text.as_bytes()).expect("ascii");
        assert_eq!(m.facets.get(0)[0], [0.1, 0.2, 0.3]);
        assert_eq!(m.facets.get(0)[1][0], 1e-17);
        assert_eq!(m.facets.get(0)[2][2], 123456.789012345);
        // The winding's normal is about (8, 1, 0): (0, 0, 1) is over 45° from it.
        assert_eq!(m.normal_stale, Some(vec![true]));
    }

    #[test]
    fn ascii_several_solids_become_parts_and_repeats_continue() {
        let t = |x: &str| facet("0 0 1", &[&format!("{x} 0 0"), "1 0 0", "0 1 0"]);
        let text = format!(
            "solid hull\n{}{}endsolid hull\nSOLID Rudder Blade\n{}ENDSOLID\nsolid hull\n{}endsolid\n",
            t("1"),
            t("2"),
            t("3"),
            t("4")
        );
        let m = read_stl(Path::new("boat.stl"), text.as_bytes()).expect("ascii");
        let names: Vec<_> = m.parts.iter().map(|p| p.name.as_str()).collect();
        assert_eq!(names, ["hull", "Rudder Blade"]);
        let xs: Vec<f64> = m.facets.iter().map(|f| f[0][0]).collect();
        assert_eq!(xs, [1.0, 2.0, 4.0, 3.0]);
        assert_eq!(m.parts[0].facets, 0..3);
        assert_eq!(m.parts[1].facets, 3..4);
    }

    #[test]
    fn ascii_crlf_tabs_and_bom() {
        let text = "\u{feff}  solid\tcrlf part\r\n\tfacet\tnormal 0 0 1\r\n outer loop\r\n\
            vertex 0 0 0\r\nvertex 1 0 0\r\nvertex 0 1 0\r\nendloop\r\nendfacet\r\nendsolid crlf part\r\n";
        let m = read_stl(Path::new("c.stl"), text.as_bytes()).expect("ascii");
        assert_eq!(m.parts[0].name, "crlf part");
        assert_eq!(m.facets.get(0)[1], [1.0, 0.0, 0.0]);
    }

    #[test]
    fn ascii_quad_loop_is_triangulated_with_its_normal() {
        let text = format!(
            "solid q\n{}endsolid\n",
            facet("0 0 1", &["0 0 0", "2 0 0", "2 1 0", "0 1 0"])
        );
        let m = read_stl(Path::new("q.stl"), text.as_bytes()).expect("ascii");
        assert_eq!(m.facets.len(), 2);
        assert_eq!(m.normal_stale, Some(vec![false, false]));
        // Closed form: the two triangles cover the 2 × 1 rectangle.
        let area: f64 = m
            .facets
            .iter()
            .map(|f| {
                ((f[1][0] - f[0][0]) * (f[2][1] - f[0][1])
                    - (f[1][1] - f[0][1]) * (f[2][0] - f[0][0]))
                    / 2.0
            })
            .sum();
        assert_eq!(area, 2.0);
    }

    fn ascii_err(text: &str) -> MeshError {
        read_stl(Path::new("bad_part.stl"), text.as_bytes()).expect_err("must be refused")
    }

    #[test]
    fn ascii_errors_name_file_and_line() {
        let ok = facet("0 0 1", &["0 0 0", "1 0 0", "0 1 0"]);
        let cases: Vec<(String, usize)> = vec![
            // (text, line of the error)
            (format!("solid a\n{}", ok.replace("1 0 0", "1 zero 0")), 5),
            (format!("solid a\n{}endsolid\n", ok.replace("1 0 0", "1 nan 0")), 5),
            (format!("solid a\n{}endsolid\n", ok.replace("1 0 0", "1e400 0 0")), 5),
            (format!("solid a\n{}", ok), 8),
            (format!("solid a\n{}endsolid\ngarbage\n", ok), 10),
            (format!("solid a\n{}endsolid\n", ok.replace("outer loop", "outer lop")), 3),
            ("solid a\n facet normal 0 0 1\n outer loop\n vertex 0 0 0\n vertex 1 0 0\n endloop\n endfacet\nendsolid\n".to_string(), 6),
            (format!("solid a\n{}endsolid\n", ok.replace("normal 0 0 1", "normal 0 x 1")), 2),
        ];
        for (text, line) in cases {
            let err = ascii_err(&text);
            let msg = err.to_string();
            assert!(msg.contains("bad_part.stl"), "{msg}");
            assert!(msg.contains(&format!("line {line}")), "{msg}");
            assert_eq!(err.line(), Some(line), "{msg}");
        }
    }

    #[test]
    fn ascii_error_kinds() {
        let ok = facet("0 0 1", &["0 0 0", "1 0 0", "0 1 0"]);
        let problem = |text: String| match ascii_err(&text) {
            MeshError::Text { problem, .. } | MeshError::NeitherBinaryNorAscii { problem, .. } => {
                problem
            }
            other => panic!("unexpected {other}"),
        };
        assert!(matches!(
            problem(format!(
                "solid a\n{}endsolid\n",
                ok.replace("0 1 0", "0 inf 0")
            )),
            Problem::NonFinite { .. }
        ));
        assert!(matches!(
            problem(format!(
                "solid a\n{}endsolid\n",
                ok.replace("0 1 0", "0 1,5 0")
            )),
            Problem::BadNumber { .. }
        ));
        assert!(matches!(
            problem(format!("solid a\n{ok}")),
            Problem::UnexpectedEnd { .. }
        ));
        let empty = ascii_err("solid a\nendsolid a\n");
        assert!(matches!(empty, MeshError::Empty { .. }));
        assert!(empty.to_string().contains("bad_part.stl"));
    }

    #[test]
    fn neither_binary_nor_text_is_refused() {
        let err = read_stl(Path::new("photo.stl"), &[0xFFu8; 300]).expect_err("must be refused");
        assert!(matches!(err, MeshError::NotStl { .. }));
        // "solidity" is not the keyword.
        assert!(!starts_with_solid(b"solidity 1 2 3"));
        assert!(starts_with_solid(b"solid"));
        assert!(starts_with_solid(b" \r\nSOLID x"));
    }

    #[test]
    fn absurd_line_length_is_linear() {
        // A 20 MB name is refused on its line (names are capped); a 20 MB token is scanned
        // once and quoted short.
        let mut text = b"solid ".to_vec();
        text.extend(std::iter::repeat_n(b'n', 20_000_000));
        let err = read_stl(Path::new("long.stl"), &text).expect_err("must be refused");
        assert_eq!(err.line(), Some(1), "{err}");
        let mut text = b"solid n".to_vec();
        text.extend_from_slice(b"\nfacet normal 0 0 1 outer loop vertex ");
        text.extend(std::iter::repeat_n(b'7', 20_000_000));
        text.extend_from_slice(b"x 0 0\n");
        let start = std::time::Instant::now();
        let err = read_stl(Path::new("long.stl"), &text).expect_err("must be refused");
        assert!(start.elapsed().as_secs_f64() < 5.0);
        let msg = err.to_string();
        assert!(msg.contains("line 2") && msg.len() < 600, "{}", &msg[..200]);
    }
}
