//! VTK XML unstructured-grid (`.vtu`) writer, base64 binary inline, readable
//! by ParaView and any VTK-based viewer.

use std::io::{self, Write};

/// A data array attached to points or cells.
pub enum Array<'a> {
    /// One float per entry.
    Scalar(&'a str, Vec<f64>),
    /// Two floats per entry, written as a 3-vector with zero z.
    Vector2(&'a str, Vec<[f64; 2]>),
    /// One integer per entry.
    Int(&'a str, Vec<i32>),
}

/// The cells of the grid, as flat connectivity.
pub enum Cells<'a> {
    /// Linear triangles (VTK type 5), three nodes each.
    Triangles(&'a [u32]),
    /// Quadratic triangles (VTK type 22), six nodes each: corners, then the
    /// mid-edge nodes of edges 0-1, 1-2, 2-0.
    QuadraticTriangles(&'a [u32]),
}

/// Write a `.vtu` document to `w`, streaming: no array is copied whole (a
/// 1M-node P1 field file is about 300 MB).
pub fn write(
    w: &mut impl Write,
    points: &[[f64; 2]],
    cells: Cells,
    point_data: &[Array],
    cell_data: &[Array],
) -> io::Result<()> {
    let (connectivity, nodes_per, vtk_type): (&[u32], usize, u8) = match cells {
        Cells::Triangles(c) => (c, 3, 5),
        Cells::QuadraticTriangles(c) => (c, 6, 22),
    };
    let n_cells = connectivity.len() / nodes_per;
    w.write_all(b"<?xml version=\"1.0\"?>\n")?;
    w.write_all(b"<VTKFile type=\"UnstructuredGrid\" version=\"1.0\" byte_order=\"LittleEndian\" header_type=\"UInt64\">\n")?;
    w.write_all(b"<UnstructuredGrid>\n")?;
    writeln!(
        w,
        "<Piece NumberOfPoints=\"{}\" NumberOfCells=\"{}\">",
        points.len(),
        n_cells
    )?;
    w.write_all(b"<Points>\n")?;
    data_array(w, "Float64", "Points", 3, points.len() * 24, |e| {
        points
            .iter()
            .try_for_each(|p| e.write_f64s(&[p[0], p[1], 0.0]))
    })?;
    w.write_all(b"</Points>\n<Cells>\n")?;
    data_array(w, "Int64", "connectivity", 1, connectivity.len() * 8, |e| {
        connectivity
            .iter()
            .try_for_each(|&i| e.write_all(&i64::from(i).to_le_bytes()))
    })?;
    data_array(w, "Int64", "offsets", 1, n_cells * 8, |e| {
        (1..=n_cells).try_for_each(|i| e.write_all(&((i * nodes_per) as i64).to_le_bytes()))
    })?;
    data_array(w, "UInt8", "types", 1, n_cells, |e| {
        (0..n_cells).try_for_each(|_| e.write_all(&[vtk_type]))
    })?;
    w.write_all(b"</Cells>\n")?;
    for (tag, arrays) in [("PointData", point_data), ("CellData", cell_data)] {
        if arrays.is_empty() {
            continue;
        }
        writeln!(w, "<{tag}>")?;
        for a in arrays {
            match a {
                Array::Scalar(name, v) => {
                    data_array(w, "Float64", name, 1, v.len() * 8, |e| e.write_f64s(v))?
                }
                Array::Vector2(name, v) => data_array(w, "Float64", name, 3, v.len() * 24, |e| {
                    v.iter().try_for_each(|p| e.write_f64s(&[p[0], p[1], 0.0]))
                })?,
                Array::Int(name, v) => data_array(w, "Int32", name, 1, v.len() * 4, |e| {
                    v.iter().try_for_each(|x| e.write_all(&x.to_le_bytes()))
                })?,
            }
        }
        writeln!(w, "</{tag}>")?;
    }
    w.write_all(b"</Piece>\n</UnstructuredGrid>\n</VTKFile>\n")
}

/// One binary data array: its byte count (UInt64 header), then the bytes
/// `body` writes, base64 encoded as one stream.
fn data_array<W: Write>(
    w: &mut W,
    ty: &str,
    name: &str,
    components: usize,
    bytes: usize,
    body: impl FnOnce(&mut Base64<&mut W>) -> io::Result<()>,
) -> io::Result<()> {
    write!(
        w,
        "<DataArray type=\"{ty}\" Name=\"{}\" NumberOfComponents=\"{components}\" format=\"binary\">",
        xml_escape(name)
    )?;
    let mut e = Base64::new(&mut *w);
    e.write_all(&(bytes as u64).to_le_bytes())?;
    body(&mut e)?;
    e.finish()?;
    w.write_all(b"</DataArray>\n")
}

fn xml_escape(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

/// A streaming standard base64 (RFC 4648) encoder with padding: bytes
/// written are encoded in blocks; [`Base64::finish`] encodes the tail.
struct Base64<W: Write> {
    out: W,
    /// Bytes not yet encoded (fewer than `BLOCK` between writes).
    pending: Vec<u8>,
    encoded: Vec<u8>,
}

/// Bytes encoded at a time (a multiple of 3).
const BLOCK: usize = 3 * 4096;

impl<W: Write> Base64<W> {
    fn new(out: W) -> Self {
        Base64 {
            out,
            pending: Vec::with_capacity(BLOCK + 64),
            encoded: Vec::with_capacity(BLOCK / 3 * 4 + 4),
        }
    }

    fn write_f64s(&mut self, v: &[f64]) -> io::Result<()> {
        v.iter().try_for_each(|x| self.write_all(&x.to_le_bytes()))
    }

    /// Encode what is pending, padding the last group.
    fn finish(mut self) -> io::Result<()> {
        let tail = std::mem::take(&mut self.pending);
        self.encode(&tail)
    }

    fn encode(&mut self, bytes: &[u8]) -> io::Result<()> {
        const ALPHABET: &[u8; 64] =
            b"ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
        let groups = bytes.chunks_exact(3);
        let tail = groups.remainder();
        self.encoded.clear();
        self.encoded.resize(bytes.len().div_ceil(3) * 4, b'=');
        for (g, out) in groups.zip(self.encoded.chunks_exact_mut(4)) {
            let n = (u32::from(g[0]) << 16) | (u32::from(g[1]) << 8) | u32::from(g[2]);
            for (o, shift) in out.iter_mut().zip([18, 12, 6, 0]) {
                *o = ALPHABET[((n >> shift) & 63) as usize];
            }
        }
        if !tail.is_empty() {
            // One or two bytes left: two or three characters, then '='.
            let n = (u32::from(tail[0]) << 16) | (u32::from(*tail.get(1).unwrap_or(&0)) << 8);
            let end = self.encoded.len();
            let last = &mut self.encoded[end - 4..];
            for (o, shift) in last.iter_mut().zip([18, 12, 6]).take(tail.len() + 1) {
                *o = ALPHABET[((n >> shift) & 63) as usize];
            }
        }
        self.out.write_all(&self.encoded)
    }
}

impl<W: Write> Write for Base64<W> {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        self.pending.extend_from_slice(buf);
        if self.pending.len() >= BLOCK {
            let full = self.pending.len() / 3 * 3;
            let block = std::mem::take(&mut self.pending);
            self.encode(&block[..full])?;
            self.pending = block;
            self.pending.copy_within(full.., 0);
            self.pending.truncate(self.pending.len() - full);
        }
        Ok(buf.len())
    }

    fn flush(&mut self) -> io::Result<()> {
        self.out.flush()
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
            let mut out = Vec::new();
            let mut e = Base64::new(&mut out);
            e.write_all(input.as_bytes()).unwrap();
            e.finish().unwrap();
            assert_eq!(String::from_utf8(out).unwrap(), expected, "input {input:?}");
        }
    }

    #[test]
    fn base64_streams_across_blocks_as_in_one_piece() {
        let bytes: Vec<u8> = (0..2 * BLOCK + 5).map(|i| (i * 7 % 251) as u8).collect();
        let encode = |piece: usize| {
            let mut out = Vec::new();
            let mut e = Base64::new(&mut out);
            for chunk in bytes.chunks(piece) {
                e.write_all(chunk).unwrap();
            }
            e.finish().unwrap();
            out
        };
        let whole = encode(bytes.len());
        assert_eq!(whole.len(), bytes.len().div_ceil(3) * 4);
        assert_eq!(encode(7), whole);
        assert_eq!(encode(BLOCK + 1), whole);
    }

    #[test]
    fn vtu_has_counts_and_arrays() {
        let pts = [[0.0, 0.0], [1.0, 0.0], [0.0, 1.0]];
        let mut out = Vec::new();
        write(
            &mut out,
            &pts,
            Cells::Triangles(&[0, 1, 2]),
            &[],
            &[Array::Int("shape", vec![3])],
        )
        .unwrap();
        let doc = String::from_utf8(out).unwrap();
        assert!(doc.contains("NumberOfPoints=\"3\" NumberOfCells=\"1\""));
        assert!(doc.contains("Name=\"shape\""));
        assert!(doc.ends_with("</VTKFile>\n"));
    }
}
