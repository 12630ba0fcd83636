//! Pictures of meshes (and later of fields), drawn with plotters from plain
//! data. The font is bundled so that pictures look the same on every machine.

use anyhow::{anyhow, Result};
use plotters::prelude::*;
use std::path::Path;
use std::sync::Once;

/// Our own qualitative palette for shapes (muted, distinguishable, prints
/// well in grey): steel, copper, moss, plum, ochre, teal, umber, slate-violet,
/// brick, pine.
const SHAPE_PALETTE: [RGBColor; 10] = [
    RGBColor(0x4c, 0x6a, 0x92),
    RGBColor(0xc2, 0x70, 0x3d),
    RGBColor(0x6b, 0x8e, 0x4e),
    RGBColor(0xa1, 0x4a, 0x6b),
    RGBColor(0xd4, 0xa4, 0x3a),
    RGBColor(0x5a, 0x9b, 0xa6),
    RGBColor(0x8c, 0x6d, 0x5a),
    RGBColor(0x7e, 0x7f, 0xb8),
    RGBColor(0xb8, 0x54, 0x50),
    RGBColor(0x4f, 0x7f, 0x6f),
];
/// Colour of air-filled regions: a pale blue-grey so that iron and coils stand out.
const AIR: RGBColor = RGBColor(0xe6, 0xeb, 0xf0);
const EDGE: RGBColor = RGBColor(0x22, 0x26, 0x2b);

pub(crate) const FONT: &str = "fluxwright-sans";

pub(crate) fn ensure_font() -> Result<()> {
    static ONCE: Once = Once::new();
    let mut result = Ok(());
    ONCE.call_once(|| {
        result = plotters::style::register_font(
            FONT,
            FontStyle::Normal,
            include_bytes!("../assets/DejaVuSans.ttf"),
        )
        .map_err(|_| anyhow!("the bundled font could not be loaded"));
    });
    result
}

/// One legend entry: a region's label and whether it is air-filled.
pub struct RegionStyle {
    /// Label in the legend.
    pub label: String,
    /// Air-filled regions get the pale air colour.
    pub is_air: bool,
}

/// Everything needed to draw a mesh coloured by region.
pub struct MeshPicture<'a> {
    /// Title above the plot.
    pub title: &'a str,
    /// Unit label for the axes (e.g. "mm").
    pub unit: &'a str,
    /// Node coordinates in `unit`.
    pub nodes: &'a [[f64; 2]],
    /// Triangles.
    pub triangles: &'a [[u32; 3]],
    /// Index into `regions` for each triangle.
    pub region_of: &'a [usize],
    /// Styles of the regions.
    pub regions: &'a [RegionStyle],
}

fn region_colour(regions: &[RegionStyle], i: usize) -> RGBColor {
    if regions[i].is_air {
        return AIR;
    }
    let solid_rank = regions[..i].iter().filter(|r| !r.is_air).count();
    SHAPE_PALETTE[solid_rank % SHAPE_PALETTE.len()]
}

/// Draw the mesh to a PNG file at `path`.
pub fn mesh_png(path: &Path, pic: &MeshPicture) -> Result<()> {
    ensure_font()?;
    let (lo, hi) = bounds(pic.nodes);
    let legend_w = 280u32;
    let plot_w = 1100u32;
    let aspect = ((hi[1] - lo[1]) / (hi[0] - lo[0]).max(f64::MIN_POSITIVE)).clamp(0.2, 5.0);
    let plot_h = ((plot_w as f64 - 90.0) * aspect + 110.0).round() as u32;
    let height = plot_h.max(40 + 26 * pic.regions.len() as u32 + 40).min(6000);
    let root = BitMapBackend::new(path, (plot_w + legend_w, height)).into_drawing_area();
    root.fill(&WHITE).map_err(plot_err)?;
    let (left, right) = root.split_horizontally(plot_w);
    let (x0, x1, y0, y1) = equal_aspect(lo, hi, (plot_w - 90) as f64, (height - 110) as f64);
    let mut chart = ChartBuilder::on(&left)
        .caption(pic.title, (FONT, 26))
        .margin(12)
        .x_label_area_size(40)
        .y_label_area_size(60)
        .build_cartesian_2d(x0..x1, y0..y1)
        .map_err(plot_err)?;
    chart
        .configure_mesh()
        .disable_mesh()
        .x_desc(format!("x ({})", pic.unit))
        .y_desc(format!("y ({})", pic.unit))
        .label_style((FONT, 15))
        .axis_desc_style((FONT, 17))
        .draw()
        .map_err(plot_err)?;
    let colours: Vec<RGBColor> = (0..pic.regions.len()).map(|i| region_colour(pic.regions, i)).collect();
    let pt = |i: u32| {
        let p = pic.nodes[i as usize];
        (p[0], p[1])
    };
    chart
        .draw_series(pic.triangles.iter().zip(pic.region_of).map(|(t, &r)| {
            Polygon::new(vec![pt(t[0]), pt(t[1]), pt(t[2])], colours[r].filled())
        }))
        .map_err(plot_err)?;
    // Edges only while they can still be told apart at this resolution.
    if pic.triangles.len() <= 150_000 {
        let alpha = if pic.triangles.len() > 20_000 { 0.25 } else { 0.55 };
        chart
            .draw_series(pic.triangles.iter().map(|t| {
                PathElement::new(vec![pt(t[0]), pt(t[1]), pt(t[2]), pt(t[0])], EDGE.mix(alpha).stroke_width(1))
            }))
            .map_err(plot_err)?;
    }
    let mut y = 50;
    right
        .draw(&Text::new("Shapes", (10, 20), (FONT, 19).into_font().color(&BLACK)))
        .map_err(plot_err)?;
    for (i, r) in pic.regions.iter().enumerate() {
        right
            .draw(&Rectangle::new([(10, y), (32, y + 18)], colours[i].filled()))
            .map_err(plot_err)?;
        right
            .draw(&Rectangle::new([(10, y), (32, y + 18)], EDGE.stroke_width(1)))
            .map_err(plot_err)?;
        let label: String = r.label.chars().take(28).collect();
        right
            .draw(&Text::new(label, (40, y + 1), (FONT, 16).into_font().color(&BLACK)))
            .map_err(plot_err)?;
        y += 26;
    }
    let footer = format!("{} triangles, {} nodes", pic.triangles.len(), pic.nodes.len());
    right
        .draw(&Text::new(footer, (10, height as i32 - 30), (FONT, 14).into_font().color(&EDGE)))
        .map_err(plot_err)?;
    root.present().map_err(plot_err)?;
    Ok(())
}

fn plot_err<E: std::fmt::Debug>(e: E) -> anyhow::Error {
    anyhow!("drawing failed: {e:?}")
}

pub(crate) fn bounds(nodes: &[[f64; 2]]) -> ([f64; 2], [f64; 2]) {
    let mut lo = [f64::INFINITY; 2];
    let mut hi = [f64::NEG_INFINITY; 2];
    for p in nodes {
        for k in 0..2 {
            lo[k] = lo[k].min(p[k]);
            hi[k] = hi[k].max(p[k]);
        }
    }
    if !(lo[0] < hi[0]) {
        lo[0] -= 0.5;
        hi[0] += 0.5;
    }
    if !(lo[1] < hi[1]) {
        lo[1] -= 0.5;
        hi[1] += 0.5;
    }
    (lo, hi)
}

/// Ranges that keep one unit of x as long as one unit of y on a canvas of
/// `w` × `h` pixels.
pub(crate) fn equal_aspect(lo: [f64; 2], hi: [f64; 2], w: f64, h: f64) -> (f64, f64, f64, f64) {
    let (cx, cy) = (0.5 * (lo[0] + hi[0]), 0.5 * (lo[1] + hi[1]));
    let scale = ((hi[0] - lo[0]) / w).max((hi[1] - lo[1]) / h) * 1.02;
    (cx - 0.5 * w * scale, cx + 0.5 * w * scale, cy - 0.5 * h * scale, cy + 0.5 * h * scale)
}
