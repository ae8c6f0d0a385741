//! The report's layer maps without their drawing: which layers and how
//! coarse a block (large grids stay small), the block-averaged pressures
//! and the one colour scale, with the smallest span of a pressure scale.

use rill_model::derived::cell_center_depths;
use rill_model::Case;

use crate::svg::widen;
use crate::units::Unit;

/// At most `max` layers (0-based), evenly spaced, always the top and the bottom.
pub(crate) fn chosen_layers(nz: usize, max: usize) -> Vec<usize> {
    if nz <= max {
        return (0..nz).collect();
    }
    let mut out: Vec<usize> = (0..max)
        .map(|m| ((m as f64) * (nz - 1) as f64 / (max - 1) as f64).round() as usize)
        .collect();
    out.dedup();
    out
}

/// The smallest block edge `b` with `ceil(nx/b) * ceil(ny/b) <= limit`.
pub(crate) fn block_size(nx: usize, ny: usize, limit: usize) -> usize {
    let mut b = 1;
    while nx.div_ceil(b) * ny.div_ceil(b) > limit {
        b += 1;
    }
    b
}

/// One drawn layer: its index, the block-averaged display pressures
/// (`None` for a block without active cells, row by row from `j = 0`) and
/// its mean cell centre depth in the display length unit.
pub(crate) type LayerMap = (usize, Vec<Option<f64>>, f64);

/// The chosen layers' pressures averaged over blocks of `block` x `block`
/// columns, weighted by column area over the active cells with a finite
/// pressure, in the display pressure unit.
pub(crate) fn layer_maps(
    case: &Case,
    pressure: &[f64],
    layers: &[usize],
    block: usize,
    p_unit: &Unit,
    length: &Unit,
) -> Vec<LayerMap> {
    let grid = &case.grid;
    let plane = grid.nx * grid.ny;
    let depth = cell_center_depths(grid);
    let mut maps: Vec<LayerMap> = Vec::new();
    for &k in layers {
        let base = plane * k;
        let values = block_means(
            grid.nx,
            &grid.dx,
            &grid.dy,
            block,
            |col| case.rock.is_active(base + col) && pressure[base + col].is_finite(),
            |col| p_unit.show(pressure[base + col]),
        );
        let depth_sum: f64 = depth[base..base + plane].iter().sum();
        maps.push((k, values, length.show(depth_sum / plane as f64)));
    }
    maps
}

/// One layer's values averaged over blocks of `block` x `block` columns,
/// weighted by column area (`dx[i] * dy[j]`) over the columns `col = i +
/// nx * j` that `counts`; `None` for a block with none. Row by row from
/// `j = 0`; `dy.len()` rows.
pub(crate) fn block_means(
    nx: usize,
    dx: &[f64],
    dy: &[f64],
    block: usize,
    counts: impl Fn(usize) -> bool,
    value: impl Fn(usize) -> f64,
) -> Vec<Option<f64>> {
    let ny = dy.len();
    let (bx, by) = (nx.div_ceil(block), ny.div_ceil(block));
    let mut sum = vec![0.0; bx * by];
    let mut weight = vec![0.0; bx * by];
    for (j, dy) in dy.iter().enumerate() {
        for (i, dx) in dx.iter().enumerate().take(nx) {
            let col = i + nx * j;
            if counts(col) {
                let a = dx * dy;
                let b = i / block + bx * (j / block);
                sum[b] += a * value(col);
                weight[b] += a;
            }
        }
    }
    sum.iter()
        .zip(&weight)
        .map(|(s, w)| (*w > 0.0).then(|| s / w))
        .collect()
}

/// The one colour scale of all maps: the lowest and highest value drawn,
/// widened to `min_span` (display units) about its middle, (0, 1) when
/// nothing is drawn.
pub(crate) fn colour_range(maps: &[LayerMap], min_span: f64) -> (f64, f64) {
    value_range(
        maps.iter().flat_map(|(_, v, _)| v.iter().flatten()),
        min_span,
    )
}

/// The lowest and highest of `values`, widened to `min_span` about its
/// middle, (0, 1) when there are none.
pub(crate) fn value_range<'a>(values: impl Iterator<Item = &'a f64>, min_span: f64) -> (f64, f64) {
    let (lo, hi) = values.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| {
        (a.min(v), b.max(v))
    });
    if lo.is_finite() {
        widen(lo, hi, min_span)
    } else {
        (0.0, 1.0)
    }
}

/// The smallest span of a pressure axis or colour scale, Pa: 50 kPa (about
/// 7 psi, 0.5 bar). Pressure gauges in wells read to a few psi at best, and
/// the solver settles pressures to 0.1 Pa, so a spread smaller than this is
/// nothing an engineer would call a trend; drawn across a full axis it
/// would look like one (round-off at 3000 psi is about 1e-12 psi). A real
/// change of 1 psi still covers a seventh of the axis.
pub(crate) const MIN_PRESSURE_SPAN: f64 = 50e3;

/// [`MIN_PRESSURE_SPAN`] in the display unit `p_unit`.
pub(crate) fn min_pressure_span(p_unit: &Unit) -> f64 {
    p_unit.show(MIN_PRESSURE_SPAN)
}
