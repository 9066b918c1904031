//! The pressure field of one case as VTK XML PolyData (`results/<stem>[.<case>].vtp`), for
//! ParaView and other VTK viewers.
//!
//! Owns the rendering of a [`Field`] into bytes; it does not compute the field (see
//! [`crate::compute::field`]) and does not write files (the pipeline does, atomically).
//!
//! # Layout
//!
//! ```text
//! <?xml version="1.0"?>
//! <!-- wetload: pressure field of MESH, case "CASE"; mesh axes, metres, SI.
//!      part 0 = NAME, part 1 = NAME, ... -->
//! <VTKFile type="PolyData" version="1.0" byte_order="LittleEndian" header_type="UInt64">
//!   <PolyData>
//!     <Piece NumberOfPoints="P" NumberOfVerts="0" NumberOfLines="0" NumberOfStrips="0" NumberOfPolys="C">
//!       <PointData Scalars="pressure">
//!         pressure   Float64, 1 per point: gauge pressure, Pa
//!       </PointData>
//!       <CellData Scalars="wetted" Vectors="traction">
//!         traction   Float64, 3 per cell: mean force per area on the piece, N/m², mesh axes
//!         part       Int32: index of the part (names in the comment above)
//!         facet      Int32: index of the facet within its part, from 0 (as in the CSV)
//!         area       Float64: m²
//!         wetted     UInt8: 1 where liquid touches the piece, 0 elsewhere
//!       </CellData>
//!       <Points>       Float64, 3 per point, m, mesh axes </Points>
//!       <Polys>        connectivity and offsets, Int64 </Polys>
//!     </Piece>
//!   </PolyData>
//! </VTKFile>
//! ```
//!
//! One cell per piece of the surface: a facet cut at the free surface or a layer interface
//! gives several convex polygons (3 to 5 corners), one uncut facet is one triangle. Every
//! piece is written, wetted or not, in one `Piece` element; pieces out of the liquid carry
//! the pressure the field gives them (the gas pressure above a free surface, 0 on a dry part)
//! and `wetted` = 0, so a threshold on `wetted` shows the loaded surface alone. Points are
//! not shared between cells: each cell has its own corners, so `pressure` is exact at every
//! corner even where neighbouring pieces belong to different liquids or parts, and the
//! linear interpolation a viewer draws inside a cell is the exact hydrostatic field there.
//! Numbers are ASCII in the shortest form that reads back to the same f64.

use std::fmt::Write;

use crate::compute::Field;

/// Renders the field of one case as a `.vtp` file; `mesh` and `case` name it in a comment.
///
/// Coordinates in metres and mesh axes, pressures in Pa, tractions in N/m² (see the module
/// doc for the layout).
pub fn render(field: &Field, mesh: &str, case: &str) -> Vec<u8> {
    let points: usize = field.pieces.iter().map(|p| p.vertices.len()).sum();
    let cells = field.pieces.len();
    let mut s = String::with_capacity(64 * points + 96 * cells + 1024);

    s.push_str("<?xml version=\"1.0\"?>\n");
    let parts: Vec<String> = field
        .parts
        .iter()
        .enumerate()
        .map(|(i, n)| format!("part {i} = {}", comment_safe(n)))
        .collect();
    let _ = writeln!(
        s,
        "<!-- wetload: pressure field of {}, case \"{}\"; mesh axes, metres, SI.\n     {} -->",
        comment_safe(mesh),
        comment_safe(case),
        parts.join(", ")
    );
    s.push_str(
        "<VTKFile type=\"PolyData\" version=\"1.0\" byte_order=\"LittleEndian\" header_type=\"UInt64\">\n  <PolyData>\n",
    );
    let _ = writeln!(
        s,
        "    <Piece NumberOfPoints=\"{points}\" NumberOfVerts=\"0\" NumberOfLines=\"0\" NumberOfStrips=\"0\" NumberOfPolys=\"{cells}\">"
    );

    s.push_str("      <PointData Scalars=\"pressure\">\n");
    array(
        &mut s,
        "Float64",
        "pressure",
        1,
        field.pieces.iter().flat_map(|p| p.pressure.iter().copied()),
        float,
    );
    s.push_str("      </PointData>\n");

    s.push_str("      <CellData Scalars=\"wetted\" Vectors=\"traction\">\n");
    array(
        &mut s,
        "Float64",
        "traction",
        3,
        field.pieces.iter().flat_map(|p| p.traction),
        float,
    );
    array(
        &mut s,
        "Int32",
        "part",
        1,
        field.pieces.iter().map(|p| clamp_i32(p.part)),
        |s, x| {
            let _ = write!(s, "{x}");
        },
    );
    array(
        &mut s,
        "Int32",
        "facet",
        1,
        field.pieces.iter().map(|p| {
            // Rows are one per facet in mesh order (parts are contiguous ranges), so the
            // row of a piece gives its index within the part.
            field
                .facets
                .get(p.facet)
                .filter(|row| row.part == p.part)
                .map_or(-1, |row| clamp_i32(row.index))
        }),
        |s, x| {
            let _ = write!(s, "{x}");
        },
    );
    array(
        &mut s,
        "Float64",
        "area",
        1,
        field.pieces.iter().map(|p| p.area),
        float,
    );
    array(
        &mut s,
        "UInt8",
        "wetted",
        1,
        field.pieces.iter().map(|p| u8::from(p.wetted)),
        |s, x| {
            let _ = write!(s, "{x}");
        },
    );
    s.push_str("      </CellData>\n");

    s.push_str("      <Points>\n");
    array(
        &mut s,
        "Float64",
        "Points",
        3,
        field
            .pieces
            .iter()
            .flat_map(|p| p.vertices.iter().flatten().copied()),
        float,
    );
    s.push_str("      </Points>\n");

    s.push_str("      <Polys>\n");
    array(&mut s, "Int64", "connectivity", 1, 0..points, |s, x| {
        let _ = write!(s, "{x}");
    });
    let offsets = field.pieces.iter().scan(0usize, |end, p| {
        *end += p.vertices.len();
        Some(*end)
    });
    array(&mut s, "Int64", "offsets", 1, offsets, |s, x| {
        let _ = write!(s, "{x}");
    });
    s.push_str("      </Polys>\n");

    s.push_str("    </Piece>\n  </PolyData>\n</VTKFile>\n");
    s.into_bytes()
}

/// One `<DataArray>` with `components` values per tuple, a line per tuple.
fn array<T>(
    s: &mut String,
    ty: &str,
    name: &str,
    components: usize,
    values: impl Iterator<Item = T>,
    fmt: impl Fn(&mut String, T),
) {
    let comps = if components > 1 {
        format!(" NumberOfComponents=\"{components}\"")
    } else {
        String::new()
    };
    let _ = writeln!(
        s,
        "        <DataArray type=\"{ty}\" Name=\"{name}\"{comps} format=\"ascii\">"
    );
    // Tuples of vectors on a line each; scalars in rows of nine to keep lines short.
    let per_line = if components == 1 { 9 } else { components };
    let mut col = 0;
    for v in values {
        s.push_str(if col == 0 { "          " } else { " " });
        fmt(s, v);
        col += 1;
        if col == per_line {
            s.push('\n');
            col = 0;
        }
    }
    if col != 0 {
        s.push('\n');
    }
    s.push_str("        </DataArray>\n");
}

/// The shortest decimal that reads back to the same f64 (`{:?}` switches to an exponent
/// for very large and very small magnitudes, which `{}` never does).
fn float(s: &mut String, x: f64) {
    let _ = write!(s, "{x:?}");
}

fn clamp_i32(x: usize) -> i32 {
    i32::try_from(x).unwrap_or(i32::MAX)
}

/// Text that cannot end an XML comment early or break the file's encoding.
fn comment_safe(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            // "--" is not allowed inside an XML comment.
            '-' if out.ends_with('-') => out.push('~'),
            c if c.is_control() => out.push(' '),
            c => out.push(c),
        }
    }
    if out.ends_with('-') {
        out.push('~');
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::compute::{self, field};
    use crate::mesh::{Format, Mesh};

    use crate::sidecar::parse_sidecar;
    use approx::assert_relative_eq;
    use std::path::Path;
    use vtkio::model::{Attribute, DataSet, IOBuffer, Piece, PolyDataPiece, VertexNumbers};

    const G: f64 = 9.80665;

    fn mesh(parts: Vec<(&str, Vec<shapes::Triangle>)>) -> Mesh {
        Mesh::from_parts(parts, Format::Obj)
    }

    fn read_back(bytes: &[u8]) -> PolyDataPiece {
        let vtk = vtkio::Vtk::parse_xml(bytes).expect("vtkio reads the file");
        let DataSet::PolyData { mut pieces, .. } = vtk.data else {
            panic!("not PolyData");
        };
        assert_eq!(pieces.len(), 1);
        match pieces.remove(0) {
            Piece::Inline(p) => *p,
            _ => panic!("piece not inline"),
        }
    }

    fn f64s(b: &IOBuffer) -> Vec<f64> {
        b.cast_into::<f64>().expect("numeric array")
    }

    fn cell_array<'a>(p: &'a PolyDataPiece, name: &str) -> &'a IOBuffer {
        p.data
            .cell
            .iter()
            .find_map(|a| match a {
                Attribute::DataArray(d) if d.name == name => Some(&d.data),
                _ => None,
            })
            .unwrap_or_else(|| panic!("cell array {name}"))
    }

    #[test]
    fn a_box_reads_back_with_rho_g_depth_at_every_corner() {
        // A 2 × 3 × 2 m box, floor at z = 0.25, water to 1.3 m (cuts the walls), in mm with
        // "-y" up so the writer must map both back to the mesh's own axes and metres.
        // Closed form at every corner: p = ρ g (level − elevation) below the level, 0 above.
        let tris = shapes::box_solid([-1000.0, -2250.0, -1500.0], [1000.0, -250.0, 1500.0], 2);
        let m = mesh(vec![("hull", tris.clone())]);
        let s = parse_sidecar(
            Path::new("b.json"),
            r#"{"units": "mm", "up": "-y", "liquid": {"level": 1.3, "density": 1025}}"#,
        )
        .expect("valid sidecar");
        let f = field(&m, &s, 0).expect("computes");
        let bytes = render(&f, "box.obj", "default");
        let p = read_back(&bytes);

        let pts = f64s(&p.points);
        let pressure = match &p.data.point[0] {
            Attribute::DataArray(d) => {
                assert_eq!(d.name, "pressure");
                f64s(&d.data)
            }
            other => panic!("unexpected {other:?}"),
        };
        let n_points: usize = f.pieces.iter().map(|x| x.vertices.len()).sum();
        assert_eq!(pts.len(), 3 * n_points);
        assert_eq!(pressure.len(), n_points);
        let mut below = 0;
        for (xyz, &pa) in pts.chunks(3).zip(&pressure) {
            let elevation = -xyz[1];
            assert!((0.25..=2.25 + 1e-12).contains(&elevation), "{elevation}");
            let expected = if elevation <= 1.3 {
                below += 1;
                1025.0 * G * (1.3 - elevation)
            } else {
                0.0
            };
            assert_relative_eq!(pa, expected, epsilon = 1e-9, max_relative = 1e-12);
        }
        assert!(below > 0 && below < n_points);

        let Some(VertexNumbers::XML {
            connectivity,
            offsets,
        }) = &p.polys
        else {
            panic!("polys");
        };
        assert_eq!(offsets.len(), f.pieces.len());
        assert_eq!(connectivity.len(), n_points);
        assert_eq!(offsets.last().copied(), Some(n_points as u64));

        // Values survive the text bit for bit.
        let area = f64s(cell_array(&p, "area"));
        for (a, piece) in area.iter().zip(&f.pieces) {
            assert_eq!(a.to_bits(), piece.area.to_bits());
        }
        let traction = f64s(cell_array(&p, "traction"));
        assert_eq!(traction.len(), 3 * f.pieces.len());
        assert_eq!(traction[0..3], f.pieces[0].traction);
        let wetted = cell_array(&p, "wetted").cast_into::<u8>().expect("u8");
        assert_eq!(
            wetted.iter().filter(|&&w| w == 1).count(),
            f.pieces.iter().filter(|x| x.wetted).count()
        );
        // Wetted area = floor 2·3 m² + walls 2·(2 + 3)·(1.3 − 0.25) m² (closed form).
        let wet_area: f64 = area
            .iter()
            .zip(&wetted)
            .filter(|(_, w)| **w == 1)
            .map(|(a, _)| a)
            .sum();
        assert_relative_eq!(wet_area, 6.0 + 10.0 * 1.05, max_relative = 1e-12);
        let parts = cell_array(&p, "part").cast_into::<i32>().expect("i32");
        assert!(parts.iter().all(|&x| x == 0));
        let facet = cell_array(&p, "facet").cast_into::<i32>().expect("i32");
        assert_eq!(facet.iter().copied().max(), Some(tris.len() as i32 - 1));
    }

    #[test]
    fn dry_parts_are_written_with_zero_pressure() {
        let s = parse_sidecar(
            Path::new("b.json"),
            r#"{"units": "m", "wet_side": "front",
                "liquid": {"level": 5.0, "density": 1000},
                "parts": {"dry": {"liquid": null}}}"#,
        )
        .expect("valid sidecar");
        let plate = shapes::rectangle([0.0, 0.0, 0.0], [1.0, 0.0, 0.0], [0.0, 0.0, 1.0], 1, 1);
        let dry = shapes::translate(&plate, [3.0, 0.0, 0.0]);
        let m = mesh(vec![("wet", plate), ("dry", dry)]);
        let f = field(&m, &s, 0).expect("computes");
        let p = read_back(&render(&f, "p.stl", "default"));
        let parts = cell_array(&p, "part").cast_into::<i32>().expect("i32");
        assert_eq!(parts, vec![0, 0, 1, 1]);
        let wetted = cell_array(&p, "wetted").cast_into::<u8>().expect("u8");
        assert_eq!(wetted, vec![1, 1, 0, 0]);
        let Attribute::DataArray(d) = &p.data.point[0] else {
            panic!("pressure");
        };
        let pressure = f64s(&d.data);
        assert!(pressure[6..].iter().all(|&x| x == 0.0));
        assert!(pressure[..6].iter().all(|&x| x > 0.0));
        assert!(compute::compute("p.stl", &m, &s).is_ok());
    }

    #[test]
    fn names_cannot_close_the_comment_early() {
        assert_eq!(comment_safe("a-->b"), "a-~>b");
        assert_eq!(comment_safe("x-"), "x-~");
        assert_eq!(comment_safe("line\nbreak"), "line break");
        let f = Field {
            pieces: Vec::new(),
            facets: Vec::new(),
            parts: vec!["evil -->".to_owned()],
            nodes: Vec::new(),
        };
        let text = String::from_utf8(render(&f, "m--.stl", "c")).expect("utf-8");
        assert_eq!(text.matches("-->").count(), 1);
        let p = read_back(text.as_bytes());
        assert_eq!(p.num_points(), 0);
    }

    #[test]
    fn floats_are_shortest_round_trip() {
        for x in [0.1, 1e300, -2.5e-12, 12345.678901234567, 0.0, -0.0] {
            let mut s = String::new();
            float(&mut s, x);
            assert_eq!(
                s.parse::<f64>().expect("parses").to_bits(),
                x.to_bits(),
                "{s}"
            );
        }
    }
}
