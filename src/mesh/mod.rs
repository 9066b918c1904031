//! Mesh readers: STL (binary and ASCII) and OBJ, from bytes to triangles grouped in parts.
//!
//! Owns format detection, parsing, polygon triangulation and the input errors of mesh files
//! (non-finite coordinates, empty meshes, truncated files, bad indices), each naming the file
//! and, for the text formats, the line.
//!
//! Does not read files (the caller reads the bytes, so the readers are pure and fuzzable),
//! never opens other files (OBJ `mtllib` is ignored), does not scale units or change axes,
//! does not weld vertices or check topology, and never uses stored STL normals for anything
//! but passing them on.
//!
//! Format rules (pinned in CONTRACT.md "Formats"):
//! * `.stl`: a file whose size is `84 + 50·n` (n = u32 little-endian at byte 80) is binary,
//!   whatever its header says; otherwise one that starts with `solid` (after an optional
//!   UTF-8 byte-order mark and white space) is ASCII; otherwise it is refused.
//! * A binary STL is one part named after the file's stem; each ASCII `solid NAME` block is a
//!   part named `NAME` (a `solid` without a name gets the stem; a repeated name continues
//!   that part).
//! * `.obj`: `g` and `o` both start a part (a repeated name continues it); faces before any
//!   of them belong to a part named after the stem.
//! * Polygons (OBJ faces and ASCII facet loops with more than 3 vertices) are triangulated by
//!   ear clipping in their best-fit plane, keeping their winding (module `polygon`).

mod obj;
mod polygon;
mod stl;

use std::fmt;
use std::ops::Range;
use std::path::{Path, PathBuf};

use rustc_hash::FxHashMap;
use thiserror::Error;

pub use obj::{read_obj, read_obj_with};
pub use stl::{BinaryStl, read_stl, read_stl_with};

use crate::limits::Limits;

/// The longest part name accepted (an ASCII STL `solid` name or an OBJ `g`/`o` name), in
/// bytes. Names are copied into every result and every row of the facet CSV, so a name of
/// absurd length is refused rather than multiplied.
pub const MAX_NAME_BYTES: usize = 1024;

/// The most parts (distinct names) a mesh may have. Every name selected is kept while the
/// file is read, so this bounds the memory of a file made of nothing but names.
pub const MAX_PARTS: usize = 100_000;

/// One triangle: three vertices, each `[x, y, z]` in file units and the mesh's own axes.
pub type Facet = [[f64; 3]; 3];

/// A facet as a binary STL stores it: three vertices of f32.
pub type SingleFacet = [[f32; 3]; 3];

/// The facets of a mesh, their coordinates kept as read: f32 from a binary STL (half the
/// memory; widening to f64 is exact and done where a facet is read, so every result is
/// what f64 storage would give), f64 from text (an ASCII STL or OBJ, whose decimals may
/// need more than f32 holds).
#[derive(Clone, Debug, PartialEq)]
pub enum Coords {
    Single(Vec<SingleFacet>),
    Double(Vec<Facet>),
}

impl Default for Coords {
    fn default() -> Coords {
        Coords::Double(Vec::new())
    }
}

impl From<Vec<Facet>> for Coords {
    fn from(facets: Vec<Facet>) -> Coords {
        Coords::Double(facets)
    }
}

impl Coords {
    /// Number of facets.
    pub fn len(&self) -> usize {
        match self {
            Coords::Single(f) => f.len(),
            Coords::Double(f) => f.len(),
        }
    }

    /// Whether there is no facet.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// Facet `i` in f64 (panics when `i` is out of range, like slice indexing).
    #[inline]
    pub fn get(&self, i: usize) -> Facet {
        match self {
            Coords::Single(f) => {
                let t = &f[i];
                [widen(t[0]), widen(t[1]), widen(t[2])]
            }
            Coords::Double(f) => f[i],
        }
    }

    /// Every facet in order, in f64.
    pub fn iter(&self) -> impl ExactSizeIterator<Item = Facet> + Clone + '_ {
        (0..self.len()).map(|i| self.get(i))
    }

    /// Every facet in f64, copied out.
    pub fn to_vec(&self) -> Vec<Facet> {
        self.iter().collect()
    }

    /// The bounding box of the facets `range` (mesh axes, file units) and their first
    /// vertex lowest and highest along each axis, in one parallel pass: the same for any
    /// number of threads (min and max are exact, and of equal points the first is kept).
    pub fn extremes(&self, range: std::ops::Range<usize>) -> crate::hydro::Extremes {
        use crate::hydro::{Extremes, Vec3};
        use rayon::prelude::*;
        range
            .into_par_iter()
            .with_min_len(4096)
            .fold(Extremes::none, |mut e, i| {
                for p in self.get(i) {
                    e.take(Vec3::from(p));
                }
                e
            })
            .reduce(Extremes::none, Extremes::join)
    }
}

/// A point of a binary STL in f64 (exact).
#[inline]
pub fn widen(p: [f32; 3]) -> [f64; 3] {
    [f64::from(p[0]), f64::from(p[1]), f64::from(p[2])]
}

/// A mesh's facets in its own axes and file units, as the core reads them.
impl crate::hydro::Tris for Coords {
    fn count(&self) -> usize {
        self.len()
    }
    fn tri(&self, i: usize) -> crate::hydro::Tri {
        self.get(i).map(crate::hydro::Vec3::from)
    }
}

/// A triangle mesh as read from one file.
#[derive(Clone, Debug, PartialEq)]
pub struct Mesh {
    /// Triangles in file units and mesh axes, as read ([`Coords`]), vertex order as stored (the right-hand
    /// rule over that order gives each facet's stored orientation). Facets are grouped by
    /// part: `parts[i].facets` is a contiguous range of this vector; within a part the
    /// facets keep their order in the file.
    pub facets: Coords,
    /// At least one part, in order of first appearance in the file; parts that received
    /// no facet are left out.
    pub parts: Vec<Part>,
    /// STL only: per facet, same order as `facets`, whether its stored normal is stale
    /// ([`is_stale_normal`]), judged as the file is read (binary: the normal as stored,
    /// ASCII: parsed and rounded to f32; a facet loop split into several triangles repeats
    /// its normal). The normals themselves are not kept: they are never used for
    /// geometry. `None` for OBJ.
    pub normal_stale: Option<Vec<bool>>,
    /// OBJ only: per facet, same order as `facets`, the file's 1-based vertex numbers of
    /// its three corners (a polygon's triangles keep the numbers of the polygon's
    /// vertices), so loads at vertices map to the node numbers of a model built from the
    /// same file. `None` for STL, which has no vertex numbers.
    pub vertex_ids: Option<Vec<[u32; 3]>>,
    /// The format the file was read as.
    pub format: Format,
    /// The bounding box and extreme vertices of all facets ([`Coords::extremes`] of the
    /// whole), when the reader found them as it converted (a binary STL); `None` when not
    /// known. Whoever changes `facets` sets it to `None`.
    pub extremes: Option<crate::hydro::Extremes>,
}

/// A stored STL normal more than this far from the normal of its facet's winding is stale.
pub const STALE_NORMAL_DEG: f64 = 45.0;

/// Whether the stored normal `n` of facet `t` is stale: more than [`STALE_NORMAL_DEG`]
/// from the right-hand-rule normal of the vertex order. A zero normal means "not given"
/// (a common export choice) and is not stale; nor is the normal of a facet of no area.
pub fn is_stale_normal(t: &Facet, n: &[f32; 3]) -> bool {
    // cos 45°, the limit above; a constant so that the test costs no trigonometry.
    const COS_LIMIT: f64 = std::f64::consts::FRAC_1_SQRT_2;
    let d = |i: usize, k: usize| t[i][k] - t[0][k];
    let a = [
        d(1, 1) * d(2, 2) - d(1, 2) * d(2, 1),
        d(1, 2) * d(2, 0) - d(1, 0) * d(2, 2),
        d(1, 0) * d(2, 1) - d(1, 1) * d(2, 0),
    ];
    let n = n.map(f64::from);
    let dot = a[0] * n[0] + a[1] * n[1] + a[2] * n[2];
    let la = (a[0] * a[0] + a[1] * a[1] + a[2] * a[2]).sqrt();
    let ln = (n[0] * n[0] + n[1] * n[1] + n[2] * n[2]).sqrt();
    ln > 0.0 && la > 0.0 && dot < COS_LIMIT * ln * la
}

impl Mesh {
    /// How many facets of `range` have a stale stored normal: one more than
    /// [`STALE_NORMAL_DEG`] from the right-hand-rule normal of the facet's vertex order.
    /// A zero normal means "not given" (a common export choice) and is not stale; so is
    /// every facet of a mesh without stored normals.
    pub fn stale_normals(&self, range: std::ops::Range<usize>) -> usize {
        self.normal_stale
            .as_ref()
            .map_or(0, |s| s[range].iter().filter(|&&b| b).count())
    }

    /// Judges `normals` (one per facet, as an STL would store them) against the facets'
    /// winding and keeps the verdicts in [`Mesh::normal_stale`]: for generated meshes in
    /// tests and examples.
    pub fn set_stored_normals(&mut self, normals: &[[f32; 3]]) {
        assert_eq!(normals.len(), self.facets.len(), "one normal per facet");
        let stale = self.facets.iter().zip(normals);
        self.normal_stale = Some(stale.map(|(t, n)| is_stale_normal(&t, n)).collect());
    }

    /// A mesh built from named groups of facets, in order (each group one part), with no
    /// stored normals: for generated geometry in tests, benchmarks and examples.
    pub fn from_parts<S: Into<String>>(groups: Vec<(S, Vec<Facet>)>, format: Format) -> Mesh {
        let mut facets = Vec::new();
        let mut parts = Vec::with_capacity(groups.len());
        for (name, tris) in groups {
            let start = facets.len();
            facets.extend(tris);
            parts.push(Part {
                name: name.into(),
                facets: start..facets.len(),
            });
        }
        Mesh {
            facets: Coords::Double(facets),
            parts,
            normal_stale: None,
            vertex_ids: None,
            format,
            extremes: None,
        }
    }

    /// The facets of part `i` (panics if `i` is out of range, like slice indexing).
    pub fn part_facets(&self, i: usize) -> Vec<Facet> {
        self.parts[i]
            .facets
            .clone()
            .map(|f| self.facets.get(f))
            .collect()
    }
}

/// A named group of facets: an ASCII STL `solid`, an OBJ group/object, or a whole binary STL.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Part {
    /// The name as written in the file (or the file's stem where the file names none).
    pub name: String,
    /// The part's facets as a range into [`Mesh::facets`].
    pub facets: Range<usize>,
}

/// The format a mesh was read as.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Format {
    /// Binary STL: 80-byte header, u32 facet count, 50 bytes per facet (f32 little-endian).
    StlBinary,
    /// ASCII STL: `solid … facet normal … outer loop … vertex … endloop endfacet … endsolid`.
    StlAscii,
    /// Wavefront OBJ (geometry only: `v`, `f`, `g`, `o`).
    Obj,
}

impl Format {
    /// A stable identifier for machine-readable output: `"stl-binary"`, `"stl-ascii"`, `"obj"`.
    pub fn as_str(&self) -> &'static str {
        match self {
            Format::StlBinary => "stl-binary",
            Format::StlAscii => "stl-ascii",
            Format::Obj => "obj",
        }
    }
}

/// Human-readable: "binary STL", "ASCII STL", "OBJ".
impl fmt::Display for Format {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            Format::StlBinary => "binary STL",
            Format::StlAscii => "ASCII STL",
            Format::Obj => "OBJ",
        })
    }
}

/// Why a mesh file cannot be read. Every message names the file; text formats add the line.
#[derive(Debug, Error, Clone, PartialEq)]
pub enum MeshError {
    #[error(
        "{}: not a mesh file: the name must end in .stl or .obj (any case)",
        .path.display()
    )]
    UnknownExtension { path: PathBuf },

    #[error(
        "{}: too short for an STL file ({len} bytes; a binary STL has at least 84) and it does not start with `solid`; export the mesh again",
        .path.display()
    )]
    TooShort { path: PathBuf, len: u64 },

    #[error(
        "{}: not a complete binary STL (header claims {claimed} facets = {expected} bytes, file has {len}) and not ASCII STL (it does not start with `solid`); the file may be truncated or still being written: export it again",
        .path.display()
    )]
    NotStl {
        path: PathBuf,
        claimed: u32,
        expected: u64,
        len: u64,
    },

    #[error(
        "{}: neither a complete binary STL (header claims {claimed} facets = {expected} bytes, file has {len}) nor ASCII STL (line {line}: {problem}); a binary file cut short or still being written, or damaged text: export it again",
        .path.display()
    )]
    NeitherBinaryNorAscii {
        path: PathBuf,
        claimed: u32,
        expected: u64,
        len: u64,
        line: usize,
        problem: Problem,
    },

    #[error("{}, line {line}: {problem}", .path.display())]
    Text {
        path: PathBuf,
        line: usize,
        problem: Problem,
    },

    #[error(
        "{}: facet {facet} of {count}: vertex coordinate `{value}` is not a finite number; repair the mesh or export it again",
        .path.display()
    )]
    NonFiniteBinary {
        path: PathBuf,
        /// 1-based facet number.
        facet: usize,
        count: usize,
        value: f32,
    },

    #[error(
        "{}: the mesh has no facets ({format}); export at least one surface",
        .path.display()
    )]
    Empty { path: PathBuf, format: Format },

    #[error(
        "{}: the binary STL has {count} facets, more than the limit of {limit}; if the mesh is genuine, raise the limit with the environment variable WETLOAD_MAX_FACETS",
        .path.display()
    )]
    TooManyFacets {
        path: PathBuf,
        count: u64,
        limit: usize,
    },
}

impl MeshError {
    /// The line of a text-format error, if the error has one.
    pub fn line(&self) -> Option<usize> {
        match self {
            MeshError::Text { line, .. } | MeshError::NeitherBinaryNorAscii { line, .. } => {
                Some(*line)
            }
            _ => None,
        }
    }
}

/// What is wrong on one line of an ASCII STL or OBJ file (the line is in [`MeshError`]).
#[derive(Debug, Error, Clone, PartialEq)]
pub enum Problem {
    #[error("cannot read `{token}` as a number; write decimals such as 1.25 or -3.5e-2")]
    BadNumber { token: String },

    #[error(
        "coordinate `{token}` is not a finite number (NaN, infinity, or beyond the range of f64); repair the mesh or export it again"
    )]
    NonFinite { token: String },

    #[error("expected {expected}, found `{found}`")]
    Unexpected {
        expected: &'static str,
        found: String,
    },

    #[error(
        "unexpected end of file, expected {expected}; the file may be truncated or still being written"
    )]
    UnexpectedEnd { expected: &'static str },

    #[error("a vertex needs 3 coordinates, found {found}")]
    TooFewCoordinates { found: usize },

    #[error("a facet loop has {count} vertices; it needs at least 3")]
    TooFewLoopVertices { count: usize },

    #[error("a face has {count} vertices; it needs at least 3")]
    TooFewFaceVertices { count: usize },

    #[error("cannot read face vertex `{token}`: expected an index such as 7, -1, 7/2 or 7//3")]
    BadIndex { token: String },

    #[error("face vertex index 0 is invalid: OBJ indices count from 1 (or backwards from -1)")]
    IndexZero,

    #[error(
        "face vertex index {index} is out of range: {defined} vertices are defined before this line"
    )]
    IndexOutOfRange { index: i64, defined: usize },

    #[error(
        "the mesh has more than {limit} facets, the limit; if the mesh is genuine, raise the limit with the environment variable WETLOAD_MAX_FACETS"
    )]
    TooManyFacets { limit: usize },

    #[error(
        "a part name of {len} bytes is longer than the {limit} bytes allowed; shorten the name in the exporter"
    )]
    NameTooLong { len: usize, limit: usize },

    #[error(
        "more than {limit} vertices (3 for each facet the facet limit allows); if the mesh is genuine, raise the limit with the environment variable WETLOAD_MAX_FACETS"
    )]
    TooManyVertices { limit: usize },

    #[error(
        "more than {limit} parts (distinct solid, group or object names); merge parts in the exporter"
    )]
    TooManyParts { limit: usize },

    #[error(
        "a polygon with {vertices} vertices, {non_convex} of them not convex, is too large to triangulate here (vertices × non-convex must stay ≤ {limit}); triangulate it in the exporter"
    )]
    PolygonTooComplex {
        vertices: usize,
        non_convex: usize,
        limit: u64,
    },
}

/// A text-format error before the file's path is attached.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct LineError {
    pub line: usize,
    pub problem: Problem,
}

impl LineError {
    pub(crate) fn new(line: usize, problem: Problem) -> LineError {
        LineError { line, problem }
    }

    pub(crate) fn with_path(self, path: &Path) -> MeshError {
        MeshError::Text {
            path: path.to_path_buf(),
            line: self.line,
            problem: self.problem,
        }
    }
}

/// True when `path` ends in `.stl` or `.obj`, in any case.
pub fn is_mesh_path(path: &Path) -> bool {
    matches!(mesh_extension(path), Some(Ext::Stl | Ext::Obj))
}

/// Whether `path` names an STL file (by its extension, in any case).
pub fn is_stl_path(path: &Path) -> bool {
    matches!(mesh_extension(path), Some(Ext::Stl))
}

/// Reads a mesh from the file's bytes, choosing the format by the extension of `path`,
/// under the default [`Limits`].
///
/// `path` is used only for messages and for the part name where the file names none (the
/// file's stem); nothing is read from disk. Coordinates come back in file units and mesh
/// axes. Errors: [`MeshError`], each naming `path`.
pub fn read_mesh(path: &Path, bytes: &[u8]) -> Result<Mesh, MeshError> {
    read_mesh_with(path, bytes, &Limits::default())
}

/// Like [`read_mesh`], with at most `limits.max_facets` facets: a binary STL's count is
/// checked before anything is allocated, text formats stop at the line that passes it.
/// (The file size cap applies where the file is read, before this.)
pub fn read_mesh_with(path: &Path, bytes: &[u8], limits: &Limits) -> Result<Mesh, MeshError> {
    match mesh_extension(path) {
        Some(Ext::Stl) => {
            match BinaryStl::for_file(path, bytes, bytes.len() as u64, limits.max_facets)? {
                Some(mut binary) => {
                    binary.push(&bytes[BinaryStl::HEADER..]);
                    binary.finish(path)
                }
                None => read_stl_with(path, bytes, limits.max_facets),
            }
        }
        Some(Ext::Obj) => read_obj_with(path, bytes, limits.max_facets),
        None => Err(MeshError::UnknownExtension {
            path: path.to_path_buf(),
        }),
    }
}

enum Ext {
    Stl,
    Obj,
}

fn mesh_extension(path: &Path) -> Option<Ext> {
    let ext = path.extension()?.to_str()?;
    if ext.eq_ignore_ascii_case("stl") {
        Some(Ext::Stl)
    } else if ext.eq_ignore_ascii_case("obj") {
        Some(Ext::Obj)
    } else {
        None
    }
}

/// The part name used where the file names none: the file's stem.
pub(crate) fn stem_name(path: &Path) -> String {
    path.file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .filter(|s| !s.is_empty())
        .unwrap_or_else(|| "mesh".to_string())
}

/// A token for an error message: lossy UTF-8, cut short so a line of absurd length cannot
/// make an absurd message.
pub(crate) fn quote(token: &[u8]) -> String {
    const MAX_CHARS: usize = 40;
    let text = String::from_utf8_lossy(&token[..token.len().min(4 * MAX_CHARS)]);
    if text.chars().count() > MAX_CHARS || token.len() > 4 * MAX_CHARS {
        let mut short: String = text.chars().take(MAX_CHARS).collect();
        short.push('…');
        short
    } else {
        text.into_owned()
    }
}

/// Parses a number token as f64; `None` when it is not a number at all (non-finite values
/// such as `nan`, `inf` or `1e400` parse, and are judged by the caller).
pub(crate) fn parse_f64(token: &[u8]) -> Option<f64> {
    std::str::from_utf8(token).ok()?.parse::<f64>().ok()
}

/// Parses a vertex coordinate: a finite f64.
pub(crate) fn parse_coordinate(token: &[u8]) -> Result<f64, Problem> {
    match parse_f64(token) {
        Some(v) if v.is_finite() => Ok(v),
        Some(_) => Err(Problem::NonFinite {
            token: quote(token),
        }),
        None => Err(Problem::BadNumber {
            token: quote(token),
        }),
    }
}

/// Collects facets into parts by name, keeping the order of first appearance and the
/// order of facets within each part, then lays them out contiguously.
pub(crate) struct PartsBuilder {
    default_name: String,
    /// Facets pushed so far, and the most that may be.
    count: usize,
    max_facets: usize,
    names: Vec<String>,
    index: FxHashMap<String, usize>,
    facets: Vec<Vec<Facet>>,
    /// Per part and facet, whether its stored normal is stale (when normals are given).
    stale: Option<Vec<Vec<bool>>>,
    /// Per part and facet, the file's vertex numbers of its corners (OBJ).
    ids: Option<Vec<Vec<[u32; 3]>>>,
    current: Option<usize>,
}

impl PartsBuilder {
    /// `default_name` names facets added before any [`select`](Self::select), and
    /// selections of an empty name. `with_normals`: the facets come with stored normals,
    /// each judged stale or not as it is pushed.
    pub(crate) fn new(default_name: String, with_normals: bool) -> PartsBuilder {
        PartsBuilder {
            default_name,
            count: 0,
            max_facets: usize::MAX,
            names: Vec::new(),
            index: FxHashMap::default(),
            facets: Vec::new(),
            stale: with_normals.then(Vec::new),
            ids: None,
            current: None,
        }
    }

    /// The facets come with the file's vertex numbers ([`push_numbered`](Self::push_numbered)).
    pub(crate) fn with_vertex_ids(mut self) -> PartsBuilder {
        self.ids = Some(Vec::new());
        self
    }

    /// At most `max_facets` facets may be pushed; the next one is refused.
    pub(crate) fn with_max_facets(mut self, max_facets: usize) -> PartsBuilder {
        self.max_facets = max_facets;
        self
    }

    /// The most facets that may be pushed.
    pub(crate) fn max_facets(&self) -> usize {
        self.max_facets
    }

    /// How many more facets may be pushed.
    pub(crate) fn room(&self) -> usize {
        self.max_facets.saturating_sub(self.count)
    }

    /// Makes `name` the part that receives the next facets (an empty name means the
    /// default name); a name seen before continues its part. A name longer than
    /// [`MAX_NAME_BYTES`] is refused.
    pub(crate) fn select(&mut self, name: &str) -> Result<(), Problem> {
        if name.len() > MAX_NAME_BYTES {
            return Err(Problem::NameTooLong {
                len: name.len(),
                limit: MAX_NAME_BYTES,
            });
        }
        let name = if name.is_empty() {
            self.default_name.clone()
        } else {
            name.to_string()
        };
        if self.names.len() >= MAX_PARTS && !self.index.contains_key(&name) {
            return Err(Problem::TooManyParts { limit: MAX_PARTS });
        }
        self.current = Some(self.part_index(name));
        Ok(())
    }

    fn part_index(&mut self, name: String) -> usize {
        if let Some(&i) = self.index.get(&name) {
            return i;
        }
        let i = self.names.len();
        self.index.insert(name.clone(), i);
        self.names.push(name);
        self.facets.push(Vec::new());
        if let Some(stale) = &mut self.stale {
            stale.push(Vec::new());
        }
        if let Some(ids) = &mut self.ids {
            ids.push(Vec::new());
        }
        i
    }

    fn current(&mut self) -> usize {
        match self.current {
            Some(i) => i,
            None => {
                let i = self.part_index(self.default_name.clone());
                self.current = Some(i);
                i
            }
        }
    }

    /// Adds a facet to the current part; refused once the facet limit is reached.
    pub(crate) fn push(&mut self, facet: Facet, normal: [f32; 3]) -> Result<(), Problem> {
        if self.count >= self.max_facets {
            return Err(Problem::TooManyFacets {
                limit: self.max_facets,
            });
        }
        self.count += 1;
        let i = self.current();
        if let Some(stale) = &mut self.stale {
            stale[i].push(is_stale_normal(&facet, &normal));
        }
        self.facets[i].push(facet);
        Ok(())
    }

    /// Adds a facet with the file's 1-based numbers of its corners (see
    /// [`with_vertex_ids`](Self::with_vertex_ids)).
    pub(crate) fn push_numbered(&mut self, facet: Facet, ids: [u32; 3]) -> Result<(), Problem> {
        self.push(facet, [0.0; 3])?;
        let i = self.current();
        if let Some(all) = &mut self.ids {
            all[i].push(ids);
        }
        Ok(())
    }

    /// The mesh, or `None` when no facet was added.
    pub(crate) fn finish(self, format: Format) -> Option<Mesh> {
        let total: usize = self.facets.iter().map(Vec::len).sum();
        if total == 0 {
            return None;
        }
        if let Some(only) = self.facets.iter().position(|f| f.len() == total) {
            // One part holds every facet (the common case): move it, don't copy it.
            let name = self.names.into_iter().nth(only)?;
            let facets = self.facets.into_iter().nth(only)?;
            let normal_stale = self.stale.and_then(|s| s.into_iter().nth(only));
            let vertex_ids = self.ids.and_then(|s| s.into_iter().nth(only));
            return Some(Mesh {
                facets: Coords::Double(facets),
                parts: vec![Part {
                    name,
                    facets: 0..total,
                }],
                normal_stale,
                vertex_ids,
                format,
                extremes: None,
            });
        }
        let mut parts = Vec::new();
        let mut facets: Vec<Facet> = Vec::with_capacity(total);
        let mut stale: Option<Vec<bool>> = self.stale.as_ref().map(|_| Vec::with_capacity(total));
        let mut part_stale = self.stale.map(Vec::into_iter);
        let mut ids: Option<Vec<[u32; 3]>> = self.ids.as_ref().map(|_| Vec::with_capacity(total));
        let mut part_ids = self.ids.map(Vec::into_iter);
        for (name, part_facets) in self.names.into_iter().zip(self.facets) {
            let these = part_stale.as_mut().and_then(Iterator::next);
            let these_ids = part_ids.as_mut().and_then(Iterator::next);
            if part_facets.is_empty() {
                continue;
            }
            let start = facets.len();
            facets.extend_from_slice(&part_facets);
            if let (Some(all), Some(these)) = (&mut stale, these) {
                all.extend_from_slice(&these);
            }
            if let (Some(all), Some(these)) = (&mut ids, these_ids) {
                all.extend_from_slice(&these);
            }
            parts.push(Part {
                name,
                facets: start..facets.len(),
            });
        }
        Some(Mesh {
            facets: Coords::Double(facets),
            parts,
            normal_stale: stale,
            vertex_ids: ids,
            format,
            extremes: None,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn mesh_paths_by_extension_in_any_case() {
        for p in ["a.stl", "a.STL", "dir/b.Stl", "c.obj", "c.OBJ"] {
            assert!(is_mesh_path(Path::new(p)), "{p}");
        }
        for p in ["a.json", "stl", "a.stl.tmp", "a", "a.st"] {
            assert!(!is_mesh_path(Path::new(p)), "{p}");
        }
    }

    #[test]
    fn unknown_extension_names_the_file() {
        let err = read_mesh(Path::new("gate.ply"), b"ply").expect_err("must be refused");
        assert!(matches!(err, MeshError::UnknownExtension { .. }));
        assert!(err.to_string().contains("gate.ply"), "{err}");
    }

    #[test]
    fn quote_cuts_long_tokens() {
        let long = vec![b'x'; 1_000_000];
        let q = quote(&long);
        assert_eq!(q.chars().count(), 41);
        assert!(q.ends_with('…'));
        assert_eq!(quote(b"1.2.3"), "1.2.3");
    }

    #[test]
    fn coordinates_must_be_finite_numbers() {
        assert_eq!(parse_coordinate(b"0.1"), Ok(0.1));
        for t in ["nan", "NaN", "inf", "-infinity", "1e400", "-1e309"] {
            assert!(
                matches!(
                    parse_coordinate(t.as_bytes()),
                    Err(Problem::NonFinite { .. })
                ),
                "{t}"
            );
        }
        for t in ["1,5", "abc", "1.0d0", ""] {
            assert!(
                matches!(
                    parse_coordinate(t.as_bytes()),
                    Err(Problem::BadNumber { .. })
                ),
                "{t}"
            );
        }
    }

    #[test]
    fn parts_builder_regroups_repeated_names_in_order() {
        // Winding normal (1, k, k), stored normal (k − 1)(1, 1, 1): stale for k = 0 only
        // (opposite), not for k = 1 (zero: not given) nor above (within 45°).
        let f = |k: f64| [[k, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]];
        let n = |k: f32| [k - 1.0; 3];
        let mut b = PartsBuilder::new("stem".into(), true);
        b.push(f(0.0), n(0.0)).expect("within the limits");
        b.select("a").expect("within the limits");
        b.push(f(1.0), n(1.0)).expect("within the limits");
        b.select("unused").expect("within the limits");
        b.select("b").expect("within the limits");
        b.push(f(2.0), n(2.0)).expect("within the limits");
        b.select("a").expect("within the limits");
        b.push(f(3.0), n(3.0)).expect("within the limits");
        b.select("").expect("within the limits");
        b.push(f(4.0), n(4.0)).expect("within the limits");
        let m = b.finish(Format::Obj).expect("facets were added");
        let names: Vec<_> = m.parts.iter().map(|p| p.name.as_str()).collect();
        assert_eq!(names, ["stem", "a", "b"]);
        let xs: Vec<f64> = m.facets.iter().map(|t| t[0][0]).collect();
        assert_eq!(xs, [0.0, 4.0, 1.0, 3.0, 2.0]);
        assert_eq!(m.parts[0].facets, 0..2);
        assert_eq!(m.parts[1].facets, 2..4);
        assert_eq!(m.parts[2].facets, 4..5);
        // Judged one by one, in the facets' new order.
        let want: Vec<bool> = [0.0, 4.0, 1.0, 3.0, 2.0]
            .iter()
            .map(|&k| is_stale_normal(&f(k), &n(k as f32)))
            .collect();
        assert_eq!(want, [true, false, false, false, false]);
        assert_eq!(m.normal_stale.expect("kept"), want);
    }

    /// The real CAD exports kept in `tests/data/cad-exports/` (see its README.md).
    fn export(name: &str) -> (PathBuf, Vec<u8>) {
        let path = Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("tests/data/cad-exports")
            .join(name);
        let bytes = std::fs::read(&path).expect("fixture present");
        (path, bytes)
    }

    #[test]
    fn real_binary_exports_load_as_one_part_named_after_the_stem() {
        // Headers seen in the files: "solid angle_block" (a binary file whose header starts
        // with solid), "STLB ASM …", "Binary STL output from Blender …", "FileType: Binary",
        // "ddlid featuretype".
        for name in [
            "angle_block.STL",
            "round.stl",
            "teapot.stl",
            "busted.STL",
            "featuretype.STL",
        ] {
            let (path, bytes) = export(name);
            // Counted independently: from the file size, which must agree with the header.
            let count = (bytes.len() - 84) / 50;
            assert_eq!((bytes.len() - 84) % 50, 0, "{name}");
            assert_eq!(
                u32::from_le_bytes([bytes[80], bytes[81], bytes[82], bytes[83]]) as usize,
                count
            );
            let m = read_mesh(&path, &bytes).expect(name);
            assert_eq!(m.format, Format::StlBinary, "{name}");
            assert_eq!(m.facets.len(), count, "{name}");
            let stem = name.rsplit_once('.').expect("has extension").0;
            assert_eq!(
                m.parts,
                vec![Part {
                    name: stem.to_string(),
                    facets: 0..count
                }],
                "{name}"
            );
            assert_eq!(m.normal_stale.as_ref().map(Vec::len), Some(count));
        }
    }

    #[test]
    fn real_binary_exports_match_stl_io() {
        for name in [
            "angle_block.STL",
            "round.stl",
            "teapot.stl",
            "busted.STL",
            "featuretype.STL",
        ] {
            let (path, mut bytes) = export(name);
            let ours = read_mesh(&path, &bytes).expect(name);
            // stl_io sniffs a header starting with "solid " as ASCII; blank the header (it
            // carries no geometry) so it reads the binary body.
            bytes[..80].fill(0);
            let mut cursor = std::io::Cursor::new(&bytes[..]);
            let theirs: Vec<stl_io::Triangle> = stl_io::create_stl_reader(&mut cursor)
                .expect("binary")
                .collect::<Result<_, _>>()
                .expect("complete");
            assert_eq!(theirs.len(), ours.facets.len(), "{name}");
            let stale = ours.normal_stale.as_ref().expect("stl");
            for (k, t) in theirs.iter().enumerate() {
                let widened = t.vertices.map(|v| v.0.map(f64::from));
                assert_eq!(widened, ours.facets.get(k), "{name} facet {k}");
                let judged = is_stale_normal(&widened, &t.normal.0);
                assert_eq!(judged, stale[k], "{name} facet {k}");
            }
        }
    }

    /// `facet normal` lines of an ASCII file, counted without our parser.
    fn count_facet_lines(bytes: &[u8]) -> usize {
        String::from_utf8_lossy(bytes)
            .lines()
            .filter(|l| {
                l.trim_start()
                    .to_ascii_lowercase()
                    .starts_with("facet normal")
            })
            .count()
    }

    #[test]
    fn real_ascii_exports_keep_their_solids() {
        // Names and facet counts as found in the files with grep: two `solid` lines each.
        // multibody.stl has CRLF line ends; two_objects… ends its solids with a bare
        // `endsolid`.
        for (name, parts, per_part) in [
            ("multibody.stl", ["bodyB", "bodyA"], [12, 20]),
            (
                "two_objects_mixed_case_names.stl",
                ["CubeExportedFromCAD", "TranslatedCubeExportedFromCAD"],
                [12, 12],
            ),
        ] {
            let (path, bytes) = export(name);
            let m = read_mesh(&path, &bytes).expect(name);
            assert_eq!(m.format, Format::StlAscii, "{name}");
            assert_eq!(m.facets.len(), count_facet_lines(&bytes), "{name}");
            let got: Vec<(&str, usize)> = m
                .parts
                .iter()
                .map(|p| (p.name.as_str(), p.facets.len()))
                .collect();
            let want: Vec<(&str, usize)> = parts.into_iter().zip(per_part).collect();
            assert_eq!(got, want, "{name}");
            assert_eq!(m.normal_stale.as_ref().map(Vec::len), Some(m.facets.len()));
        }
    }

    #[test]
    fn real_ascii_export_first_solid_matches_stl_io() {
        // stl_io reads only the first solid, as f32; ours are f64. Compare within f32
        // rounding (relative 2⁻²³ of the coordinate, plus an absolute 1e-30 for zeros).
        let (path, bytes) = export("two_objects_mixed_case_names.stl");
        let ours = read_mesh(&path, &bytes).expect("ascii");
        let mut cursor = std::io::Cursor::new(&bytes[..]);
        let theirs: Vec<stl_io::Triangle> = stl_io::create_stl_reader(&mut cursor)
            .expect("ascii")
            .collect::<Result<_, _>>()
            .expect("complete");
        let first = ours.part_facets(0);
        assert_eq!(theirs.len(), first.len());
        for (t, f) in theirs.iter().zip(first) {
            for (vertex, ours) in t.vertices.iter().zip(f) {
                for (&a, b) in vertex.0.iter().zip(ours) {
                    let a = f64::from(a);
                    assert!((a - b).abs() <= b.abs() * 1.2e-7 + 1e-30, "{a} vs {b}");
                }
            }
        }
        // And the float noise survives in f64: the file writes 4.336809e-16 where 0 was
        // meant.
        assert!(
            ours.facets
                .iter()
                .flatten()
                .flatten()
                .any(|c| c == 4.336809e-16)
        );
    }

    proptest::proptest! {
        #![proptest_config(proptest::prelude::ProptestConfig::with_cases(300))]

        /// Any bytes give a mesh or an error naming the file, never a panic.
        #[test]
        fn arbitrary_bytes_never_panic(
            bytes in proptest::collection::vec(proptest::prelude::any::<u8>(), 0..600),
        ) {
            for name in ["fuzz.stl", "fuzz.obj"] {
                if let Err(e) = read_mesh(Path::new(name), &bytes) {
                    proptest::prop_assert!(e.to_string().contains(name));
                }
            }
        }

        /// Valid-looking text with one byte changed: the same.
        #[test]
        fn damaged_text_never_panics(pos in 0usize..400, byte in proptest::prelude::any::<u8>()) {
            let stl = b"solid s\nfacet normal 0 0 1\nouter loop\nvertex 0 0 0\nvertex 1 0 0\n\
                vertex 1 1 0\nvertex 0 1 0\nendloop\nendfacet\nendsolid s\n".to_vec();
            let obj = b"v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0.5 0.2 0\nv 0 1 0\ng a\nf 1 2 3 4 5\n\
                o b\nf -1 -2 -3\ng a\nf 1/1 2//2 3/3/3\n".to_vec();
            for (name, mut text) in [("d.stl", stl), ("d.obj", obj)] {
                let at = pos % text.len();
                text[at] = byte;
                if let Err(e) = read_mesh(Path::new(name), &text) {
                    proptest::prop_assert!(e.to_string().contains(name));
                }
            }
        }
    }

    /// The line problem of a text-format error (an ASCII STL of 84 bytes or more reports
    /// it inside "neither binary nor ASCII").
    fn problem_of(err: &MeshError) -> Option<&Problem> {
        match err {
            MeshError::Text { problem, .. } | MeshError::NeitherBinaryNorAscii { problem, .. } => {
                Some(problem)
            }
            _ => None,
        }
    }

    fn limits(max_facets: usize) -> Limits {
        Limits {
            max_facets,
            ..Limits::default()
        }
    }

    /// An ASCII STL of `n` facets in one solid named `name`, one keyword per line.
    fn ascii_stl(name: &str, n: usize) -> String {
        let mut s = format!("solid {name}\n");
        for _ in 0..n {
            s += "facet normal 0 0 1\nouter loop\nvertex 0 0 0\nvertex 1 0 0\nvertex 0 1 0\nendloop\nendfacet\n";
        }
        s + "endsolid\n"
    }

    #[test]
    fn binary_facet_count_is_checked_before_reading() {
        // A real binary STL of 3 facets (size 84 + 150) under a limit of 2.
        let mut bytes = vec![0u8; 80];
        bytes.extend_from_slice(&3u32.to_le_bytes());
        bytes.extend(std::iter::repeat_n(0u8, 150));
        let err = read_mesh_with(Path::new("big.stl"), &bytes, &limits(2)).expect_err("refused");
        assert_eq!(
            err,
            MeshError::TooManyFacets {
                path: PathBuf::from("big.stl"),
                count: 3,
                limit: 2
            }
        );
        assert!(
            err.to_string().contains("big.stl") && err.to_string().contains("WETLOAD_MAX_FACETS")
        );
        assert_eq!(BinaryStl::count(&bytes, bytes.len() as u64), Some(3));
        assert_eq!(BinaryStl::count(&bytes[..233], 233), None);
        // At the limit it is read (and refused for its degenerate zero facets elsewhere).
        assert!(read_mesh_with(Path::new("big.stl"), &bytes, &limits(3)).is_ok());
    }

    #[test]
    fn text_formats_stop_at_the_facet_limit_with_the_line() {
        let text = ascii_stl("s", 3);
        assert_eq!(
            read_mesh_with(Path::new("a.stl"), text.as_bytes(), &limits(3)).map(|m| m.facets.len()),
            Ok(3)
        );
        let err =
            read_mesh_with(Path::new("a.stl"), text.as_bytes(), &limits(2)).expect_err("refused");
        // Refused at the third facet's third vertex (line 1 + 2·7 + 5), the line whose
        // triangle would pass the limit.
        assert_eq!(err.line(), Some(20), "{err}");
        assert_eq!(
            problem_of(&err),
            Some(&Problem::TooManyFacets { limit: 2 }),
            "{err}"
        );
        let obj = "v 0 0 0\nv 1 0 0\nv 0 1 0\nv 1 1 0\nf 1 2 3\nf 2 4 3\nf 1 2 4 3\n";
        let err =
            read_mesh_with(Path::new("a.obj"), obj.as_bytes(), &limits(3)).expect_err("refused");
        assert_eq!(err.line(), Some(7), "{err}");
        assert!(
            err.to_string().contains("a.obj") && err.to_string().contains("more than 3 facets")
        );
        assert!(read_mesh_with(Path::new("a.obj"), obj.as_bytes(), &limits(4)).is_ok());
    }

    #[test]
    fn a_face_line_of_absurd_length_stops_at_the_facet_limit() {
        // 10 million vertex references on one line, 20 MB: refused after room + 2 of them,
        // long before the face or its triangulation would be built.
        let mut text = b"v 0 0 0\nv 1 0 0\nv 0 1 0\nf".to_vec();
        for _ in 0..10_000_000 {
            text.extend_from_slice(b" 1");
        }
        let err = read_mesh_with(Path::new("long.obj"), &text, &limits(1000)).expect_err("refused");
        assert_eq!(err.line(), Some(4));
        assert_eq!(
            problem_of(&err),
            Some(&Problem::TooManyFacets { limit: 1000 })
        );
    }

    #[test]
    fn part_names_of_absurd_length_are_refused_with_the_line() {
        let long = "n".repeat(MAX_NAME_BYTES + 1);
        let ok = "n".repeat(MAX_NAME_BYTES);
        let err =
            read_mesh(Path::new("n.stl"), ascii_stl(&long, 1).as_bytes()).expect_err("refused");
        assert_eq!(err.line(), Some(1));
        assert!(
            err.to_string().contains("1025 bytes") && err.to_string().contains("n.stl"),
            "{err}"
        );
        let m = read_mesh(Path::new("n.stl"), ascii_stl(&ok, 1).as_bytes()).expect("at the cap");
        assert_eq!(m.parts[0].name, ok);
        let obj = format!("v 0 0 0\nv 1 0 0\nv 0 1 0\ng {long}\nf 1 2 3\n");
        let err = read_mesh(Path::new("n.obj"), obj.as_bytes()).expect_err("refused");
        assert_eq!(err.line(), Some(4));
        assert_eq!(
            problem_of(&err),
            Some(&Problem::NameTooLong {
                len: 1025,
                limit: MAX_NAME_BYTES
            })
        );
    }

    #[test]
    fn names_vertices_and_loops_are_bounded_too() {
        // A file of nothing but distinct group names.
        let mut groups = String::new();
        for i in 0..=MAX_PARTS {
            groups += &format!("g p{i}\n");
        }
        let err = read_mesh(Path::new("g.obj"), groups.as_bytes()).expect_err("refused");
        assert_eq!(err.line(), Some(MAX_PARTS + 1), "{err}");
        assert_eq!(
            problem_of(&err),
            Some(&Problem::TooManyParts { limit: MAX_PARTS })
        );
        // Repeating names is fine.
        let repeated = "g a\ng b\n".repeat(MAX_PARTS);
        let err = read_mesh(Path::new("g.obj"), repeated.as_bytes()).expect_err("no faces");
        assert!(matches!(err, MeshError::Empty { .. }), "{err}");
        // Vertices: at most 3 per allowed facet.
        let obj = "v 0 0 0\n".repeat(7);
        let err =
            read_mesh_with(Path::new("v.obj"), obj.as_bytes(), &limits(2)).expect_err("refused");
        assert_eq!(err.line(), Some(7));
        assert_eq!(
            problem_of(&err),
            Some(&Problem::TooManyVertices { limit: 6 })
        );
        // An ASCII facet loop of absurd length stops at the facet limit.
        let mut stl = String::from("solid s\nfacet normal 0 0 1\nouter loop\n");
        for i in 0..1000 {
            stl += &format!("vertex {i} {} 0\n", i % 3);
        }
        stl += "endloop\nendfacet\nendsolid\n";
        let err =
            read_mesh_with(Path::new("l.stl"), stl.as_bytes(), &limits(10)).expect_err("refused");
        assert_eq!(err.line(), Some(3 + 13), "{err}");
        assert_eq!(
            problem_of(&err),
            Some(&Problem::TooManyFacets { limit: 10 })
        );
    }

    #[test]
    fn parts_builder_without_facets_is_empty() {
        let mut b = PartsBuilder::new("stem".into(), false);
        b.select("a").expect("within the limits");
        assert!(b.finish(Format::Obj).is_none());
    }
}
