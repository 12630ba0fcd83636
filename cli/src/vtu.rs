//! VTK XML unstructured-grid (`.vtu`) writer, base64 binary inline, readable
//! by ParaView and any VTK-based viewer.

use std::fmt::Write as _;

/// A data array attached to points or cells.
pub enum Array<'a> {
    /// One float per entry.
    Scalar(&'a str, Vec<f64>),
    /// Two floats per entry, written as a 3-vector with zero z.
    Vector2(&'a str, Vec<[f64; 2]>),
    /// One integer per entry.
    Int(&'a str, Vec<i32>),
}

/// The cells of the grid.
pub enum Cells<'a> {
    /// Linear triangles (VTK type 5).
    Triangles(&'a [[u32; 3]]),
    /// Quadratic triangles (VTK type 22): corners, then the mid-edge nodes of
    /// edges 0-1, 1-2, 2-0.
    QuadraticTriangles(&'a [[u32; 6]]),
}

/// Render a `.vtu` document.
pub fn render(
    points: &[[f64; 2]],
    cells: Cells,
    point_data: &[Array],
    cell_data: &[Array],
) -> String {
    let (n_cells, connectivity, nodes_per, vtk_type): (usize, Vec<i64>, usize, u8) = match cells {
        Cells::Triangles(t) => (
            t.len(),
            t.iter().flatten().map(|&i| i as i64).collect(),
            3,
            5,
        ),
        Cells::QuadraticTriangles(t) => (
            t.len(),
            t.iter().flatten().map(|&i| i as i64).collect(),
            6,
            22,
        ),
    };
    let mut s = String::with_capacity(64 * points.len() + 64 * n_cells);
    s.push_str("<?xml version=\"1.0\"?>\n");
    s.push_str("<VTKFile type=\"UnstructuredGrid\" version=\"1.0\" byte_order=\"LittleEndian\" header_type=\"UInt64\">\n");
    s.push_str("<UnstructuredGrid>\n");
    let _ = writeln!(
        s,
        "<Piece NumberOfPoints=\"{}\" NumberOfCells=\"{}\">",
        points.len(),
        n_cells
    );
    s.push_str("<Points>\n");
    let xyz: Vec<f64> = points.iter().flat_map(|p| [p[0], p[1], 0.0]).collect();
    data_array(&mut s, "Float64", "Points", 3, &f64_bytes(&xyz));
    s.push_str("</Points>\n<Cells>\n");
    data_array(
        &mut s,
        "Int64",
        "connectivity",
        1,
        &i64_bytes(&connectivity),
    );
    let offsets: Vec<i64> = (1..=n_cells).map(|i| (i * nodes_per) as i64).collect();
    data_array(&mut s, "Int64", "offsets", 1, &i64_bytes(&offsets));
    data_array(&mut s, "UInt8", "types", 1, &vec![vtk_type; n_cells]);
    s.push_str("</Cells>\n");
    for (tag, arrays) in [("PointData", point_data), ("CellData", cell_data)] {
        if arrays.is_empty() {
            continue;
        }
        let _ = writeln!(s, "<{tag}>");
        for a in arrays {
            match a {
                Array::Scalar(name, v) => data_array(&mut s, "Float64", name, 1, &f64_bytes(v)),
                Array::Vector2(name, v) => {
                    let flat: Vec<f64> = v.iter().flat_map(|p| [p[0], p[1], 0.0]).collect();
                    data_array(&mut s, "Float64", name, 3, &f64_bytes(&flat))
                }
                Array::Int(name, v) => {
                    let bytes: Vec<u8> = v.iter().flat_map(|x| x.to_le_bytes()).collect();
                    data_array(&mut s, "Int32", name, 1, &bytes)
                }
            }
        }
        let _ = writeln!(s, "</{tag}>");
    }
    s.push_str("</Piece>\n</UnstructuredGrid>\n</VTKFile>\n");
    s
}

fn data_array(s: &mut String, ty: &str, name: &str, components: usize, bytes: &[u8]) {
    let _ = write!(
        s,
        "<DataArray type=\"{ty}\" Name=\"{}\" NumberOfComponents=\"{components}\" format=\"binary\">",
        xml_escape(name)
    );
    let mut block = Vec::with_capacity(bytes.len() + 8);
    block.extend_from_slice(&(bytes.len() as u64).to_le_bytes());
    block.extend_from_slice(bytes);
    base64_into(s, &block);
    s.push_str("</DataArray>\n");
}

fn f64_bytes(v: &[f64]) -> Vec<u8> {
    v.iter().flat_map(|x| x.to_le_bytes()).collect()
}

fn i64_bytes(v: &[i64]) -> Vec<u8> {
    v.iter().flat_map(|x| x.to_le_bytes()).collect()
}

fn xml_escape(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

/// Standard base64 (RFC 4648) with padding.
fn base64_into(s: &mut String, bytes: &[u8]) {
    const ALPHABET: &[u8; 64] = b"ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
    s.reserve(bytes.len().div_ceil(3) * 4);
    for chunk in bytes.chunks(3) {
        let b = [
            chunk[0],
            *chunk.get(1).unwrap_or(&0),
            *chunk.get(2).unwrap_or(&0),
        ];
        let n = ((b[0] as u32) << 16) | ((b[1] as u32) << 8) | b[2] as u32;
        let out = [(n >> 18) & 63, (n >> 12) & 63, (n >> 6) & 63, n & 63];
        for (k, &c) in out.iter().enumerate() {
            if k <= chunk.len() {
                s.push(ALPHABET[c as usize] as char);
            } else {
                s.push('=');
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn base64_matches_rfc4648_test_vectors() {
        // Test vectors from RFC 4648, section 10.
        for (input, expected) in [
            ("", ""),
            ("f", "Zg=="),
            ("fo", "Zm8="),
            ("foo", "Zm9v"),
            ("foob", "Zm9vYg=="),
            ("fooba", "Zm9vYmE="),
            ("foobar", "Zm9vYmFy"),
        ] {
            let mut s = String::new();
            base64_into(&mut s, input.as_bytes());
            assert_eq!(s, expected, "input {input:?}");
        }
    }

    #[test]
    fn vtu_has_counts_and_arrays() {
        let pts = [[0.0, 0.0], [1.0, 0.0], [0.0, 1.0]];
        let tris = [[0u32, 1, 2]];
        let doc = render(
            &pts,
            Cells::Triangles(&tris),
            &[],
            &[Array::Int("shape", vec![3])],
        );
        assert!(doc.contains("NumberOfPoints=\"3\" NumberOfCells=\"1\""));
        assert!(doc.contains("Name=\"shape\""));
        assert!(doc.ends_with("</VTKFile>\n"));
    }
}
