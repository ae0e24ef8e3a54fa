//! The report's plots, drawn with plotters into SVG text: convergence
//! (digits against steps per time unit or evaluations, with the fitted slope
//! and reference slopes), invariant error against time over the long run
//! (log-log, with reference growth rates), and work against precision
//! across steppers (one panel per problem).

use plotters::coord::ranged1d::ValueFormatter;
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::cert::{CheckCert, PackageCert, StepperCert};
use crate::metrics::RungClass;

/// Colours that stay distinct for the common colour-vision deficiencies
/// (Okabe and Ito, "Color Universal Design", 2008; yellow left out, it is
/// unreadable on white).
const PALETTE: [RGBColor; 7] = [
    RGBColor(0, 114, 178),
    RGBColor(213, 94, 0),
    RGBColor(0, 158, 115),
    RGBColor(204, 121, 167),
    RGBColor(230, 159, 0),
    RGBColor(86, 180, 233),
    RGBColor(0, 0, 0),
];

/// Grey of the reference slopes.
const REFERENCE: RGBColor = RGBColor(150, 150, 150);

/// Size of a single plot in pixels, legend included: fits a laptop screen
/// and scales down to a printed page's width.
const SIZE: (u32, u32) = (1100, 560);

/// Width of the legend column at the right of a single plot.
const LEGEND_WIDTH: u32 = 270;

/// Font sizes as asked of plotters, which draws text at 1/1.24 of the size
/// asked: titles, axis descriptions, tick and legend labels.
const TITLE_FONT: u32 = 27;
const AXIS_FONT: u32 = 20;
const LABEL_FONT: u32 = 18;

/// The smallest error drawn on a log axis (an error of exactly zero is
/// drawn here, below double-precision rounding of 1.1e-16).
const ERROR_FLOOR: f64 = 1e-17;

/// Digits axis range: rounding of double precision ends near 16 digits.
const DIGITS_MAX: f64 = 16.0;

/// A plot that could not be drawn.
#[derive(Debug)]
pub struct PlotError(pub String);

impl std::fmt::Display for PlotError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "a plot could not be drawn: {}", self.0)
    }
}

impl std::error::Error for PlotError {}

fn err<E: std::fmt::Debug>(e: E) -> PlotError {
    PlotError(format!("{e:?}"))
}

/// How the k-th line of a plot looks: a colour of the palette, with
/// circles for the first round of colours and triangles for the second.
#[derive(Clone, Copy)]
struct Look {
    color: RGBColor,
    triangle: bool,
}

fn look(k: usize) -> Look {
    Look {
        color: PALETTE[k % PALETTE.len()],
        triangle: (k / PALETTE.len()) % 2 == 1,
    }
}

/// Draws the markers of `pts` (x, y, filled) in `look`.
fn markers<DB: DrawingBackend, X: Ranged<ValueType = f64>, Y: Ranged<ValueType = f64>>(
    chart: &mut ChartContext<DB, Cartesian2d<X, Y>>,
    pts: &[(f64, f64, bool)],
    look: Look,
) -> Result<(), PlotError> {
    let style = |filled: bool| {
        if filled {
            look.color.filled()
        } else {
            look.color.stroke_width(1)
        }
    };
    if look.triangle {
        chart
            .draw_series(
                pts.iter()
                    .map(|&(x, y, f)| TriangleMarker::new((x, y), 5, style(f))),
            )
            .map_err(err)?;
    } else {
        chart
            .draw_series(
                pts.iter()
                    .map(|&(x, y, f)| Circle::new((x, y), 4, style(f))),
            )
            .map_err(err)?;
    }
    Ok(())
}

/// A legend in its own column (`area`), so it never hides data: a line
/// sample with its marker and the label, one entry per row.
fn legend<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    entries: &[(String, Look)],
) -> Result<(), PlotError> {
    let font = ("sans-serif", LABEL_FONT).into_font();
    for (i, (label, lk)) in entries.iter().enumerate() {
        let y = 60 + 24 * i as i32;
        area.draw(&PathElement::new(
            vec![(8, y), (36, y)],
            lk.color.stroke_width(2),
        ))
        .map_err(err)?;
        if lk.triangle {
            area.draw(&TriangleMarker::new((22, y), 5, lk.color.filled()))
                .map_err(err)?;
        } else {
            area.draw(&Circle::new((22, y), 4, lk.color.filled()))
                .map_err(err)?;
        }
        area.draw(&Text::new(label.clone(), (44, y - 8), font.clone()))
            .map_err(err)?;
    }
    Ok(())
}

/// Least and greatest of `xs` (finite, positive), widened by a factor
/// `pad` on a log axis; `None` when there is none.
fn log_range(xs: impl Iterator<Item = f64>, pad: f64) -> Option<(f64, f64)> {
    let (lo, hi) = xs
        .filter(|x| x.is_finite() && *x > 0.0)
        .fold((f64::INFINITY, 0.0f64), |(lo, hi), x| {
            (lo.min(x), hi.max(x))
        });
    if !(lo.is_finite() && hi > 0.0) {
        return None;
    }
    let hi = if hi > lo { hi } else { lo * 10.0 };
    Some((lo / pad, hi * pad))
}

/// The x of a rung on a convergence plot: steps per time unit, or total
/// evaluations for an adaptive integrator.
fn rung_x(check: &CheckCert, k: usize) -> Option<f64> {
    let r = check.rungs.get(k)?;
    if check.adaptive() {
        r.evals.map(|e| e as f64)
    } else {
        r.steps_per_unit.map(|n| n as f64)
    }
}

/// A point of a convergence plot: (x, digits, whether the rung was fitted).
type Point = (f64, f64, bool);

/// The points of a check: (x, digits, fitted).
fn points(check: &CheckCert) -> Vec<Point> {
    (0..check.rungs.len())
        .filter_map(|k| {
            let d = check.rungs[k].digits?;
            let x = rung_x(check, k)?;
            Some((x, d, check.rungs[k].class == RungClass::Fitted))
        })
        .collect()
}

/// The fitted straight line over the fit range: slope = order in digits per
/// decade, through the mean of the fitted points.
fn fit_line(check: &CheckCert, pts: &[Point]) -> Option<[(f64, f64); 2]> {
    let order = check.order.as_ref()?.order;
    let fitted: Vec<(f64, f64)> = pts
        .iter()
        .filter(|p| p.2)
        .map(|&(x, d, _)| (x, d))
        .collect();
    if fitted.len() < 2 {
        return None;
    }
    let n = fitted.len() as f64;
    let intercept = fitted
        .iter()
        .map(|(x, d)| d - order * x.log10())
        .sum::<f64>()
        / n;
    let (x0, x1) = (fitted[0].0, fitted[fitted.len() - 1].0);
    Some([
        (x0, intercept + order * x0.log10()),
        (x1, intercept + order * x1.log10()),
    ])
}

fn svg_text(
    size: (u32, u32),
    draw: impl FnOnce(&DrawingArea<SVGBackend, Shift>) -> Result<(), PlotError>,
) -> Result<String, PlotError> {
    let mut text = String::new();
    {
        let root = SVGBackend::with_string(&mut text, size).into_drawing_area();
        root.fill(&WHITE).map_err(err)?;
        draw(&root)?;
        root.present().map_err(err)?;
    }
    Ok(text)
}

/// The mesh of a chart: light grid, labelled axes, readable fonts.
fn mesh<DB: DrawingBackend, X, Y>(
    chart: &mut ChartContext<DB, Cartesian2d<X, Y>>,
    x_desc: &str,
    y_desc: &str,
    x_format: &dyn Fn(&f64) -> String,
    y_format: &dyn Fn(&f64) -> String,
) -> Result<(), PlotError>
where
    X: Ranged<ValueType = f64> + ValueFormatter<f64>,
    Y: Ranged<ValueType = f64> + ValueFormatter<f64>,
{
    chart
        .configure_mesh()
        .x_desc(x_desc)
        .y_desc(y_desc)
        .x_label_formatter(x_format)
        .y_label_formatter(y_format)
        .label_style(("sans-serif", LABEL_FONT))
        .axis_desc_style(("sans-serif", AXIS_FONT))
        .light_line_style(RGBColor(236, 236, 236))
        .bold_line_style(RGBColor(200, 200, 200))
        .draw()
        .map_err(err)
}

/// A single plot's frame: the title on top, the plot area on the left and
/// the legend column ([`LEGEND_WIDTH`]) on the right.
type Areas<'a> = (
    DrawingArea<SVGBackend<'a>, Shift>,
    DrawingArea<SVGBackend<'a>, Shift>,
);

fn titled_with_legend<'a>(
    root: &DrawingArea<SVGBackend<'a>, Shift>,
    title: &str,
) -> Result<Areas<'a>, PlotError> {
    let root = root
        .titled(title, ("sans-serif", TITLE_FONT))
        .map_err(err)?;
    Ok(root.split_horizontally(SIZE.0 - LEGEND_WIDTH))
}

/// A tick label of a count on a log axis: 100, 1000, 1e4 ...
fn count_label(v: &f64) -> String {
    if *v < 9_999.5 {
        format!("{v:.0}")
    } else {
        format!("{v:.0e}")
    }
}

/// A tick label of digits.
fn digits_label(v: &f64) -> String {
    format!("{v:.0}")
}

/// A grey dashed reference line from `a` to `b`, labelled just left of
/// its end so the label stays inside the plot.
fn reference<DB: DrawingBackend, X: Ranged<ValueType = f64>, Y: Ranged<ValueType = f64>>(
    chart: &mut ChartContext<DB, Cartesian2d<X, Y>>,
    a: (f64, f64),
    b: (f64, f64),
    label: &str,
) -> Result<(), PlotError> {
    chart
        .draw_series(DashedLineSeries::new(
            [a, b],
            7,
            5,
            REFERENCE.stroke_width(1),
        ))
        .map_err(err)?;
    let style = ("sans-serif", LABEL_FONT)
        .into_font()
        .color(&REFERENCE)
        .pos(Pos::new(HPos::Right, VPos::Bottom));
    chart
        .draw_series(std::iter::once(Text::new(label.to_string(), b, style)))
        .map_err(err)?;
    Ok(())
}

/// The convergence plot of a stepper: solution digits per rung of every
/// check (fitted rungs filled, the others hollow), the fitted slope as a
/// dashed black segment, and grey reference slopes. `None` when no check
/// has two points.
pub fn convergence(stepper: &StepperCert) -> Result<Option<String>, PlotError> {
    // Each check with its points (x, digits, fitted), read once.
    let checks: Vec<(&CheckCert, Vec<Point>)> = stepper
        .checks
        .iter()
        .map(|c| (c, points(c)))
        .filter(|(_, pts)| pts.len() >= 2)
        .collect();
    let adaptive = checks.iter().any(|(c, _)| c.adaptive());
    let Some((x0, x1)) = log_range(
        checks.iter().flat_map(|(_, pts)| pts.iter().map(|p| p.0)),
        1.3,
    ) else {
        return Ok(None);
    };
    let x_desc = if adaptive {
        "right-hand-side evaluations over the horizon (log scale)"
    } else {
        "steps per time unit (per period where there is one; log scale)"
    };
    let mut orders: Vec<f64> = vec![1.0, 2.0, 4.0];
    if let Some(o) = stepper.claimed.order.filter(|o| *o > 0.0) {
        if !orders.contains(&o) {
            orders.push(o);
        }
    }
    let entries: Vec<(String, Look)> = checks
        .iter()
        .enumerate()
        .map(|(k, (c, _))| {
            let label = match &c.order {
                Some(o) => format!("{}: order {:.2}", c.problem_label(), o.order),
                None => format!("{}: no order", c.problem_label()),
            };
            (label, look(k))
        })
        .collect();
    svg_text(SIZE, |root| {
        let (plot_area, legend_area) =
            titled_with_legend(root, &format!("Convergence of {}", stepper.name))?;
        let mut chart = ChartBuilder::on(&plot_area)
            .margin(12)
            .x_label_area_size(58)
            .y_label_area_size(64)
            .build_cartesian_2d((x0..x1).log_scale(), 0.0..DIGITS_MAX)
            .map_err(err)?;
        mesh(
            &mut chart,
            x_desc,
            "solution digits (-log10 scaled error)",
            &count_label,
            &digits_label,
        )?;
        // Reference slopes from the lower left: p digits per decade, up to
        // the top edge or 85 % of the way across.
        let (a, b) = (x0 * 1.3, x1 / 1.3);
        let decades = (b / a).log10() * 0.85;
        for &p in &orders {
            let span = (DIGITS_MAX * 0.97 / p).min(decades);
            reference(
                &mut chart,
                (a, 0.0),
                (a * 10f64.powf(span), p * span),
                &format!("slope {p}"),
            )?;
        }
        for (k, (check, pts)) in checks.iter().enumerate() {
            let lk = look(k);
            chart
                .draw_series(LineSeries::new(
                    pts.iter().map(|p| (p.0, p.1)),
                    lk.color.stroke_width(2),
                ))
                .map_err(err)?;
            markers(&mut chart, pts, lk)?;
            if let Some(line) = fit_line(check, pts) {
                chart
                    .draw_series(DashedLineSeries::new(line, 9, 4, BLACK.stroke_width(1)))
                    .map_err(err)?;
            }
        }
        legend(&legend_area, &entries)
    })
    .map(Some)
}

/// The invariant-error plot of a stepper: each long run's relative
/// invariant error against elapsed time, log-log, with grey reference
/// growth rates t^(1/2) (random walk) and t (linear). A bounded error is
/// flat. `None` when no check had a long run with invariants.
pub fn invariants(stepper: &StepperCert) -> Result<Option<String>, PlotError> {
    let series: Vec<(String, Vec<(f64, f64)>)> = stepper
        .checks
        .iter()
        .filter_map(|c| Some((c, c.long_run.as_ref()?)))
        .flat_map(|(c, lr)| {
            lr.series.iter().map(move |s| {
                let pts: Vec<(f64, f64)> =
                    s.t.iter()
                        .zip(&s.error)
                        .filter(|(t, e)| **t > 0.0 && t.is_finite() && e.is_finite())
                        .map(|(&t, &e)| (t, e.max(ERROR_FLOOR)))
                        .collect();
                (format!("{}: {}", c.problem_label(), s.name), pts)
            })
        })
        .filter(|(_, p)| p.len() >= 2)
        .collect();
    let Some((t0, t1)) = log_range(series.iter().flat_map(|s| s.1.iter().map(|p| p.0)), 1.2) else {
        return Ok(None);
    };
    let Some((e0, e1)) = log_range(series.iter().flat_map(|s| s.1.iter().map(|p| p.1)), 3.0) else {
        return Ok(None);
    };
    let entries: Vec<(String, Look)> = series
        .iter()
        .enumerate()
        .map(|(k, s)| (s.0.clone(), look(k)))
        .collect();
    svg_text(SIZE, |root| {
        let (plot_area, legend_area) = titled_with_legend(
            root,
            &format!("Invariant error over the long run: {}", stepper.name),
        )?;
        let mut chart = ChartBuilder::on(&plot_area)
            .margin(12)
            .x_label_area_size(58)
            .y_label_area_size(84)
            .build_cartesian_2d((t0..t1).log_scale(), (e0..e1).log_scale())
            .map_err(err)?;
        mesh(
            &mut chart,
            "elapsed time in time units (periods where there is one; log scale)",
            "relative invariant error (log scale)",
            &count_label,
            &|v| format!("{v:.0e}"),
        )?;
        // Reference growth from the geometric middle of the error range at
        // the first time, to 85 % of the way across or the top edge.
        let start = (t0 * 1.2, (e0 * e1).sqrt());
        let t_end = start.0 * (t1 / 1.2 / start.0).powf(0.85);
        for (p, name) in [(0.5, "t^(1/2): random walk"), (1.0, "t: linear")] {
            let top = e1 / 1.5;
            let e_end = (start.1 * (t_end / start.0).powf(p)).min(top);
            let t_at = start.0 * (e_end / start.1).powf(1.0 / p);
            reference(&mut chart, start, (t_at, e_end), name)?;
        }
        for (k, (_, pts)) in series.iter().enumerate() {
            chart
                .draw_series(LineSeries::new(
                    pts.iter().copied(),
                    look(k).color.stroke_width(2),
                ))
                .map_err(err)?;
            // A marker every so often tells lines of the same colour apart.
            let marks: Vec<(f64, f64, bool)> = pts
                .iter()
                .step_by(pts.len().div_ceil(8).max(1))
                .map(|&(t, e)| (t, e, true))
                .collect();
            markers(&mut chart, &marks, look(k))?;
        }
        legend(&legend_area, &entries)
    })
    .map(Some)
}

/// One panel of the work-precision plot: its title and, per stepper (by
/// index), the points (evaluations, digits).
type Panel = (String, Vec<(usize, Vec<(f64, f64)>)>);

/// The work-precision plot of a package: one panel per problem, in each a
/// line per stepper of solution digits against total right-hand-side
/// evaluations. `None` when no problem has a measured ladder.
pub fn work_precision(pkg: &PackageCert) -> Result<Option<String>, PlotError> {
    // Panels by check name without the stepper (problem[:tag]).
    let mut panels: Vec<Panel> = Vec::new();
    for (k, stepper) in pkg.steppers.iter().enumerate() {
        for check in &stepper.checks {
            let pts: Vec<(f64, f64)> = check
                .rungs
                .iter()
                .filter_map(|r| Some((r.evals? as f64, r.digits?)))
                .filter(|(e, _)| *e > 0.0)
                .collect();
            if pts.len() < 2 {
                continue;
            }
            let title = check.problem_label();
            match panels.iter_mut().find(|p| p.0 == title) {
                Some(p) => p.1.push((k, pts)),
                None => panels.push((title, vec![(k, pts)])),
            }
        }
    }
    if panels.is_empty() {
        return Ok(None);
    }
    panels.sort_by(|a, b| a.0.cmp(&b.0));
    let cols = panels.len().clamp(1, 3);
    let rows = panels.len().div_ceil(cols);
    let size = (SIZE.0 + LEGEND_WIDTH / 2, 70 + 340 * rows as u32);
    let entries: Vec<(String, Look)> = pkg
        .steppers
        .iter()
        .enumerate()
        .map(|(k, s)| (s.name.clone(), look(k)))
        .collect();
    svg_text(size, |root| {
        let root = root
            .titled(
                &format!("Work against precision: {}", pkg.name),
                ("sans-serif", TITLE_FONT),
            )
            .map_err(err)?;
        let (grid, legend_area) = root.split_horizontally(size.0 - LEGEND_WIDTH / 2 - 40);
        let areas = grid.split_evenly((rows, cols));
        for ((title, lines), area) in panels.iter().zip(areas.iter()) {
            let Some((x0, x1)) = log_range(lines.iter().flat_map(|l| l.1.iter().map(|p| p.0)), 1.3)
            else {
                continue;
            };
            let mut chart = ChartBuilder::on(area)
                .caption(title, ("sans-serif", AXIS_FONT + 2))
                .margin(10)
                .x_label_area_size(52)
                .y_label_area_size(52)
                .build_cartesian_2d((x0..x1).log_scale(), 0.0..DIGITS_MAX)
                .map_err(err)?;
            chart
                .configure_mesh()
                .x_desc("evaluations (log scale)")
                .y_desc("digits")
                .x_labels(5)
                .x_label_formatter(&count_label)
                .y_label_formatter(&digits_label)
                .label_style(("sans-serif", LABEL_FONT - 2))
                .axis_desc_style(("sans-serif", LABEL_FONT))
                .light_line_style(RGBColor(236, 236, 236))
                .bold_line_style(RGBColor(200, 200, 200))
                .draw()
                .map_err(err)?;
            for (k, pts) in lines {
                let lk = look(*k);
                chart
                    .draw_series(LineSeries::new(
                        pts.iter().copied(),
                        lk.color.stroke_width(2),
                    ))
                    .map_err(err)?;
                let marks: Vec<(f64, f64, bool)> = pts.iter().map(|&(e, d)| (e, d, true)).collect();
                markers(&mut chart, &marks, lk)?;
            }
        }
        legend(&legend_area, &entries)
    })
    .map(Some)
}
