//! A small triangle rasteriser. Shading a million triangles as vector
//! polygons makes slow PNGs and huge SVGs; filling pixels directly costs
//! one pass over the triangles and the pixels they cover, whatever the mesh
//! size, and the result is placed in the chart as one image.

/// An RGB image over a window of the plane.
pub struct Raster {
    /// Width in pixels.
    pub width: u32,
    /// Height in pixels.
    pub height: u32,
    /// Row-major RGB bytes, top row first.
    pub rgb: Vec<u8>,
}

/// Fill `cells` (triangles over `points`) into a `width` × `height` image of
/// the window `x0..x1` × `y0..y1`, each cell in `colour(cell)`; pixels whose
/// centre no cell covers stay `background`.
#[allow(clippy::too_many_arguments)]
pub fn fill(
    width: u32,
    height: u32,
    window: [f64; 4],
    points: &[[f64; 2]],
    cells: &[[u32; 3]],
    colour: impl Fn(usize) -> (u8, u8, u8),
    background: (u8, u8, u8),
) -> Raster {
    let [x0, y0, x1, y1] = window;
    let (w, h) = (width as usize, height as usize);
    let mut rgb = Vec::with_capacity(w * h * 3);
    for _ in 0..w * h {
        rgb.extend_from_slice(&[background.0, background.1, background.2]);
    }
    let sx = width as f64 / (x1 - x0);
    let sy = height as f64 / (y1 - y0);
    for (c, cell) in cells.iter().enumerate() {
        // Pixel coordinates: u to the right, v downwards.
        let p = cell.map(|i| {
            let q = points[i as usize];
            [(q[0] - x0) * sx, (y1 - q[1]) * sy]
        });
        let (umin, umax) = (
            p[0][0].min(p[1][0]).min(p[2][0]),
            p[0][0].max(p[1][0]).max(p[2][0]),
        );
        let (vmin, vmax) = (
            p[0][1].min(p[1][1]).min(p[2][1]),
            p[0][1].max(p[1][1]).max(p[2][1]),
        );
        if umax < 0.0 || vmax < 0.0 || umin > width as f64 || vmin > height as f64 {
            continue;
        }
        let i0 = ((umin - 0.5).ceil().max(0.0)) as usize;
        let i1 = ((umax - 0.5).floor().min(width as f64 - 1.0)) as i64;
        let j0 = ((vmin - 0.5).ceil().max(0.0)) as usize;
        let j1 = ((vmax - 0.5).floor().min(height as f64 - 1.0)) as i64;
        if i1 < i0 as i64 || j1 < j0 as i64 {
            continue;
        }
        let area = edge(p[0], p[1], p[2]);
        if area == 0.0 {
            continue;
        }
        // Inclusive edge tests with a little slack: a pixel centre on a shared
        // edge is painted by both cells, never by neither.
        let slack = -1e-9 * area.abs();
        let (r, g, b) = colour(c);
        for j in j0..=j1 as usize {
            for i in i0..=i1 as usize {
                let q = [i as f64 + 0.5, j as f64 + 0.5];
                let (e0, e1, e2) = (
                    edge(p[1], p[2], q),
                    edge(p[2], p[0], q),
                    edge(p[0], p[1], q),
                );
                let inside = if area > 0.0 {
                    e0 >= slack && e1 >= slack && e2 >= slack
                } else {
                    e0 <= -slack && e1 <= -slack && e2 <= -slack
                };
                if inside {
                    let k = 3 * (j * w + i);
                    rgb[k] = r;
                    rgb[k + 1] = g;
                    rgb[k + 2] = b;
                }
            }
        }
    }
    Raster { width, height, rgb }
}

fn edge(a: [f64; 2], b: [f64; 2], q: [f64; 2]) -> f64 {
    (b[0] - a[0]) * (q[1] - a[1]) - (b[1] - a[1]) * (q[0] - a[0])
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn two_triangles_tile_a_square_without_gaps() {
        let points = [[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]];
        let cells = [[0, 1, 2], [0, 2, 3]];
        let img = fill(
            16,
            16,
            [0.0, 0.0, 1.0, 1.0],
            &points,
            &cells,
            |c| if c == 0 { (255, 0, 0) } else { (0, 0, 255) },
            (0, 255, 0),
        );
        // No background pixel is left inside the square.
        assert!(img.rgb.chunks(3).all(|p| p != [0, 255, 0]));
        // The lower-right half (y small, x large: bottom rows, right columns) is red.
        let px = |i: usize, j: usize| &img.rgb[3 * (j * 16 + i)..3 * (j * 16 + i) + 3];
        assert_eq!(px(15, 15), [255, 0, 0]);
        assert_eq!(px(0, 0), [0, 0, 255]);
    }
}
