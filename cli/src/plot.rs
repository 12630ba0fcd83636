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
    let height = plot_h
        .max(40 + 26 * pic.regions.len() as u32 + 40)
        .min(6000);
    let root = BitMapBackend::new(path, (plot_w + legend_w, height)).into_drawing_area();
    root.fill(&WHITE).map_err(plot_err)?;
    let (left, right) = root.split_horizontally(plot_w);
    let (x0, x1, y0, y1) = equal_aspect(lo, hi, (plot_w - 90) as f64, (height - 110) as f64);
    let mut chart = plane_chart(&left, pic.title, 26, pic.unit, [x0, x1, y0, y1])?;
    let colours: Vec<RGBColor> = (0..pic.regions.len())
        .map(|i| region_colour(pic.regions, i))
        .collect();
    let pt = |i: u32| {
        let p = pic.nodes[i as usize];
        (p[0], p[1])
    };
    let (pw, ph) = chart.plotting_area().dim_in_pixel();
    let shading = crate::raster::fill(
        pw,
        ph,
        [x0, y0, x1, y1],
        pic.nodes,
        pic.triangles,
        |t| {
            let c = colours[pic.region_of[t]];
            (c.0, c.1, c.2)
        },
        (255, 255, 255),
    );
    chart
        .draw_series(std::iter::once(image_element((x0, y1), shading)?))
        .map_err(plot_err)?;
    // Edges only while they can still be told apart at this resolution.
    if pic.triangles.len() <= 150_000 {
        let alpha = if pic.triangles.len() > 20_000 {
            0.25
        } else {
            0.55
        };
        chart
            .draw_series(pic.triangles.iter().map(|t| {
                PathElement::new(
                    vec![pt(t[0]), pt(t[1]), pt(t[2]), pt(t[0])],
                    EDGE.mix(alpha).stroke_width(1),
                )
            }))
            .map_err(plot_err)?;
    }
    let mut y = 50;
    right
        .draw(&Text::new(
            "Shapes",
            (10, 20),
            (FONT, 19).into_font().color(&BLACK),
        ))
        .map_err(plot_err)?;
    for (i, r) in pic.regions.iter().enumerate() {
        right
            .draw(&Rectangle::new(
                [(10, y), (32, y + 18)],
                colours[i].filled(),
            ))
            .map_err(plot_err)?;
        right
            .draw(&Rectangle::new(
                [(10, y), (32, y + 18)],
                EDGE.stroke_width(1),
            ))
            .map_err(plot_err)?;
        let label: String = r.label.chars().take(28).collect();
        right
            .draw(&Text::new(
                label,
                (40, y + 1),
                (FONT, 16).into_font().color(&BLACK),
            ))
            .map_err(plot_err)?;
        y += 26;
    }
    let footer = format!(
        "{} triangles, {} nodes",
        pic.triangles.len(),
        pic.nodes.len()
    );
    right
        .draw(&Text::new(
            footer,
            (10, height as i32 - 30),
            (FONT, 14).into_font().color(&EDGE),
        ))
        .map_err(plot_err)?;
    root.present().map_err(plot_err)?;
    Ok(())
}

type PlaneChart<'a, DB> = ChartContext<
    'a,
    DB,
    Cartesian2d<plotters::coord::types::RangedCoordf64, plotters::coord::types::RangedCoordf64>,
>;

/// A chart of the model plane with equal-aspect ranges `[x0, x1, y0, y1]`,
/// axes labelled in `unit`, and no grid.
fn plane_chart<'a, DB: DrawingBackend>(
    area: &'a DrawingArea<DB, plotters::coord::Shift>,
    title: &str,
    title_size: u32,
    unit: &str,
    [x0, x1, y0, y1]: [f64; 4],
) -> Result<PlaneChart<'a, DB>>
where
    DB::ErrorType: 'static,
{
    let mut chart = ChartBuilder::on(area)
        .caption(title, (FONT, title_size))
        .margin(12)
        .x_label_area_size(40)
        .y_label_area_size(60)
        .build_cartesian_2d(x0..x1, y0..y1)
        .map_err(plot_err)?;
    chart
        .configure_mesh()
        .disable_mesh()
        .x_desc(format!("x ({unit})"))
        .y_desc(format!("y ({unit})"))
        .label_style((FONT, 15))
        .axis_desc_style((FONT, 17))
        .draw()
        .map_err(plot_err)?;
    Ok(chart)
}

/// A raster placed with its top-left corner at `top_left` (data coordinates).
fn image_element(
    top_left: (f64, f64),
    r: crate::raster::Raster,
) -> Result<BitMapElement<'static, (f64, f64)>> {
    BitMapElement::with_owned_buffer(top_left, (r.width, r.height), r.rgb)
        .ok_or_else(|| anyhow!("the shaded image does not fit its buffer"))
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
    (
        cx - 0.5 * w * scale,
        cx + 0.5 * w * scale,
        cy - 0.5 * h * scale,
        cy + 0.5 * h * scale,
    )
}

/// Everything needed to draw a field map: |B| shading, flux lines, outlines.
pub struct FieldPicture<'a> {
    /// Title above the plot.
    pub title: &'a str,
    /// Unit label for the axes.
    pub unit: &'a str,
    /// Plotting points in `unit`.
    pub points: &'a [[f64; 2]],
    /// Linear sub-triangles over `points`.
    pub cells: &'a [[u32; 3]],
    /// |B| of each cell, T.
    pub cell_values: &'a [f64],
    /// The flux function at each point (its contours are flux lines).
    pub flux: &'a [f64],
    /// Shape outlines as line segments, in `unit`.
    pub outlines: &'a [[[f64; 2]; 2]],
    /// Zoom window `[x0, y0, x1, y1]` in `unit`, or the whole mesh.
    pub view: Option<[f64; 4]>,
    /// Number of flux lines over the whole flux range.
    pub flux_lines: usize,
}

/// Draw a field map as PNG (`png`) and SVG (`svg`).
pub fn field_map(png: &Path, svg: &Path, pic: &FieldPicture) -> Result<()> {
    ensure_font()?;
    let (lo, hi) = match pic.view {
        Some([x0, y0, x1, y1]) => ([x0.min(x1), y0.min(y1)], [x0.max(x1), y0.max(y1)]),
        None => bounds(pic.points),
    };
    let plot_w = 1100u32;
    let aspect = ((hi[1] - lo[1]) / (hi[0] - lo[0]).max(f64::MIN_POSITIVE)).clamp(0.25, 4.0);
    let height = (((plot_w as f64 - 90.0) * aspect + 110.0).round() as u32).clamp(420, 4400);
    let size = (plot_w + 190, height);
    // The two pictures are independent: draw them side by side (at 1M
    // triangles each takes about half a second).
    let (png, svg) = rayon::join(
        || {
            draw_field(
                BitMapBackend::new(png, size).into_drawing_area(),
                pic,
                lo,
                hi,
            )
        },
        || draw_field(SVGBackend::new(svg, size).into_drawing_area(), pic, lo, hi),
    );
    png.and(svg)
}

fn draw_field<DB: DrawingBackend>(
    root: DrawingArea<DB, plotters::coord::Shift>,
    pic: &FieldPicture,
    lo: [f64; 2],
    hi: [f64; 2],
) -> Result<()>
where
    DB::ErrorType: 'static,
{
    root.fill(&WHITE).map_err(plot_err)?;
    let (w, h) = root.dim_in_pixel();
    let (left, right) = root.split_horizontally(w - 190);
    let (x0, x1, y0, y1) = equal_aspect(lo, hi, (w - 190 - 90) as f64, (h - 110) as f64);
    let visible = |c: &[u32; 3]| {
        let ps = c.map(|i| pic.points[i as usize]);
        let (mx, my) = (
            ps.iter().map(|p| p[0]).fold(f64::INFINITY, f64::min),
            ps.iter().map(|p| p[1]).fold(f64::INFINITY, f64::min),
        );
        let (nx, ny) = (
            ps.iter().map(|p| p[0]).fold(f64::NEG_INFINITY, f64::max),
            ps.iter().map(|p| p[1]).fold(f64::NEG_INFINITY, f64::max),
        );
        nx >= x0 && mx <= x1 && ny >= y0 && my <= y1
    };
    let shown: Vec<usize> = (0..pic.cells.len())
        .filter(|&c| visible(&pic.cells[c]))
        .collect();
    let top = scale_top(shown.iter().map(|&c| pic.cell_values[c]).collect());
    let mut chart = plane_chart(&left, pic.title, 24, pic.unit, [x0, x1, y0, y1])?;
    let (pw, ph) = chart.plotting_area().dim_in_pixel();
    let shading = crate::raster::fill(
        pw,
        ph,
        [x0, y0, x1, y1],
        pic.points,
        pic.cells,
        |c| crate::colormap::flux_scale(pic.cell_values[c] / top),
        (255, 255, 255),
    );
    chart
        .draw_series(std::iter::once(image_element((x0, y1), shading)?))
        .map_err(plot_err)?;
    // Flux lines: contours of the flux function at equal steps, so that the
    // same flux flows between any two neighbouring lines.
    let (fmin, fmax) = pic
        .flux
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| {
            (a.min(v), b.max(v))
        });
    if fmax > fmin && pic.flux_lines > 0 {
        let step = (fmax - fmin) / pic.flux_lines as f64;
        let mut segments = Vec::new();
        for &c in &shown {
            contour_cell(pic, pic.cells[c], fmin, step, &mut segments);
        }
        chart
            .draw_series(segments.iter().map(|s| {
                PathElement::new(
                    vec![s[0], s[1]],
                    RGBColor(24, 24, 28).mix(0.8).stroke_width(1),
                )
            }))
            .map_err(plot_err)?;
    }
    chart
        .draw_series(pic.outlines.iter().map(|s| {
            PathElement::new(
                vec![(s[0][0], s[0][1]), (s[1][0], s[1][1])],
                RGBColor(180, 40, 40).stroke_width(1),
            )
        }))
        .map_err(plot_err)?;
    colour_bar(&right, top, h)?;
    root.present().map_err(plot_err)?;
    Ok(())
}

/// Top of the colour scale: the 99.5th percentile of the shown values, so
/// that a few singular corner values do not wash out the rest.
fn scale_top(mut values: Vec<f64>) -> f64 {
    values.retain(|v| v.is_finite());
    if values.is_empty() {
        return 1.0;
    }
    values.sort_by(f64::total_cmp);
    let k = ((values.len() as f64 - 1.0) * 0.995).round() as usize;
    let top = values[k];
    if top > 0.0 {
        top
    } else {
        values[values.len() - 1].max(1e-12)
    }
}

fn contour_cell(
    pic: &FieldPicture,
    c: [u32; 3],
    fmin: f64,
    step: f64,
    out: &mut Vec<[(f64, f64); 2]>,
) {
    let f = c.map(|i| pic.flux[i as usize]);
    let p = c.map(|i| pic.points[i as usize]);
    let lo = f.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = f.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    // Levels sit at half steps so that none falls exactly on a node value
    // of a uniform boundary (A = 0 on the outer edge).
    let first = ((lo - fmin) / step - 0.5).ceil().max(0.0) as i64;
    let last = ((hi - fmin) / step - 0.5).floor() as i64;
    for k in first..=last {
        let level = fmin + (k as f64 + 0.5) * step;
        let mut pts = Vec::with_capacity(2);
        for e in 0..3 {
            let (a, b) = (e, (e + 1) % 3);
            if (f[a] < level) != (f[b] < level) {
                let s = (level - f[a]) / (f[b] - f[a]);
                pts.push((
                    p[a][0] + s * (p[b][0] - p[a][0]),
                    p[a][1] + s * (p[b][1] - p[a][1]),
                ));
            }
        }
        if pts.len() == 2 {
            out.push([pts[0], pts[1]]);
        }
    }
}

fn colour_bar<DB: DrawingBackend>(
    area: &DrawingArea<DB, plotters::coord::Shift>,
    top: f64,
    h: u32,
) -> Result<()>
where
    DB::ErrorType: 'static,
{
    let (bar_x, bar_w) = (24i32, 28i32);
    let (bar_top, bar_bottom) = (70i32, h as i32 - 80);
    area.draw(&Text::new(
        "|B| (T)",
        (bar_x - 4, 40),
        (FONT, 18).into_font().color(&BLACK),
    ))
    .map_err(plot_err)?;
    let n = (bar_bottom - bar_top).max(1);
    for k in 0..n {
        let t = 1.0 - k as f64 / n as f64;
        let (r, g, b) = crate::colormap::flux_scale(t);
        area.draw(&Rectangle::new(
            [(bar_x, bar_top + k), (bar_x + bar_w, bar_top + k + 1)],
            RGBColor(r, g, b).filled(),
        ))
        .map_err(plot_err)?;
    }
    area.draw(&Rectangle::new(
        [(bar_x, bar_top), (bar_x + bar_w, bar_bottom)],
        BLACK.stroke_width(1),
    ))
    .map_err(plot_err)?;
    let ticks = nice_ticks(top);
    for v in ticks {
        let y = bar_bottom - ((v / top) * (bar_bottom - bar_top) as f64).round() as i32;
        area.draw(&PathElement::new(
            vec![(bar_x + bar_w, y), (bar_x + bar_w + 6, y)],
            BLACK.stroke_width(1),
        ))
        .map_err(plot_err)?;
        area.draw(&Text::new(
            format_tesla(v),
            (bar_x + bar_w + 10, y - 8),
            (FONT, 15).into_font().color(&BLACK),
        ))
        .map_err(plot_err)?;
    }
    area.draw(&Text::new(
        format!("top: {} T and above", format_tesla(top)),
        (4, bar_bottom + 22),
        (FONT, 13).into_font().color(&EDGE),
    ))
    .map_err(plot_err)?;
    area.draw(&Text::new(
        "lines: equal flux steps",
        (4, bar_bottom + 42),
        (FONT, 13).into_font().color(&EDGE),
    ))
    .map_err(plot_err)?;
    Ok(())
}

/// Round tick values from 0 to `top` (steps of 1, 2 or 5 × 10^k).
fn nice_ticks(top: f64) -> Vec<f64> {
    if !(top > 0.0) {
        return vec![0.0];
    }
    let raw = top / 5.0;
    let mag = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 5.0, 10.0]
        .iter()
        .map(|m| m * mag)
        .find(|s| *s >= raw)
        .unwrap_or(10.0 * mag);
    (0..)
        .map(|k| k as f64 * step)
        .take_while(|v| *v <= top * (1.0 + 1e-9))
        .collect()
}

fn format_tesla(v: f64) -> String {
    if v == 0.0 {
        "0".into()
    } else if v >= 0.1 {
        format!("{v:.2}")
    } else {
        format!("{v:.2e}")
    }
}

/// One sample of a profile: position along the line and (Bx, By, |B|), or
/// `None` outside the mesh.
pub type ProfilePoint = (f64, Option<[f64; 3]>);

/// Plot a profile of B along a line: |B|, Bx and By against position.
pub fn profile_png(path: &Path, title: &str, unit: &str, samples: &[ProfilePoint]) -> Result<()> {
    ensure_font()?;
    let inside: Vec<(f64, [f64; 3])> = samples
        .iter()
        .filter_map(|(x, v)| v.map(|v| (*x, v)))
        .collect();
    let x_max = samples
        .last()
        .map(|s| s.0)
        .unwrap_or(1.0)
        .max(f64::MIN_POSITIVE);
    let (mut lo, mut hi) = (0.0f64, 0.0f64);
    for (_, v) in &inside {
        for c in v {
            lo = lo.min(*c);
            hi = hi.max(*c);
        }
    }
    let pad = 0.05 * (hi - lo).max(1e-9);
    let root = BitMapBackend::new(path, (1000, 600)).into_drawing_area();
    root.fill(&WHITE).map_err(plot_err)?;
    let mut chart = ChartBuilder::on(&root)
        .caption(title, (FONT, 24))
        .margin(14)
        .x_label_area_size(44)
        .y_label_area_size(70)
        .build_cartesian_2d(0.0..x_max, (lo - pad)..(hi + pad))
        .map_err(plot_err)?;
    chart
        .configure_mesh()
        .light_line_style(RGBColor(235, 235, 235))
        .x_desc(format!("position along the line ({unit})"))
        .y_desc("flux density (T)")
        .label_style((FONT, 15))
        .axis_desc_style((FONT, 17))
        .draw()
        .map_err(plot_err)?;
    // Dark for |B| (the quantity read first), two mid tones for components.
    let series = [
        ("|B|", 2, RGBColor(30, 40, 90), 3u32),
        ("Bx", 0, RGBColor(200, 110, 40), 2),
        ("By", 1, RGBColor(60, 150, 120), 2),
    ];
    for (label, k, colour, width) in series {
        chart
            .draw_series(LineSeries::new(
                inside.iter().map(|(x, v)| (*x, v[k])),
                colour.stroke_width(width),
            ))
            .map_err(plot_err)?
            .label(label)
            .legend(move |(x, y)| {
                PathElement::new(vec![(x, y), (x + 24, y)], colour.stroke_width(width))
            });
    }
    chart
        .configure_series_labels()
        .position(SeriesLabelPosition::UpperRight)
        .background_style(WHITE.mix(0.9))
        .border_style(RGBColor(120, 120, 120))
        .label_font((FONT, 15))
        .draw()
        .map_err(plot_err)?;
    root.present().map_err(plot_err)?;
    Ok(())
}
