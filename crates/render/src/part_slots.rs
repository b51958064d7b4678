//! Where the parts of stacked and grouped bars sit: each part's extent
//! along the values, its place across its category band, and the group
//! with the most room for names.

use crate::band::Band;
use crate::layout::map;
use crescendo_frame::{PartsChart, PartsMode};

/// Extent of every part of category `c` along the value axis, in data
/// units: stacked parts pile up from zero (negative ones downwards),
/// grouped ones each start at zero. `None` for a missing value.
pub(crate) fn extents(chart: &PartsChart, c: usize) -> Vec<Option<(f64, f64)>> {
    let values = chart
        .categories
        .get(c)
        .map(|c| c.values.as_slice())
        .unwrap_or(&[]);
    let (mut pos, mut neg) = (0.0, 0.0);
    (0..chart.parts.len())
        .map(|j| {
            let v = values.get(j).copied().flatten().filter(|v| v.is_finite())?;
            Some(match chart.mode {
                PartsMode::Grouped => (0.0, v),
                PartsMode::Stacked if v >= 0.0 => {
                    pos += v;
                    (pos - v, pos)
                }
                PartsMode::Stacked => {
                    neg += v;
                    (neg - v, neg)
                }
            })
        })
        .collect()
}

/// The category whose tallest part is lowest: where grouped labels have
/// the most room.
pub(crate) fn roomiest(chart: &PartsChart) -> usize {
    let mut best = (0, f64::INFINITY);
    for c in 0..chart.categories.len() {
        let top = extents(chart, c)
            .iter()
            .flatten()
            .map(|e| e.1.max(e.0))
            .fold(0.0, f64::max);
        if top < best.1 {
            best = (c, top);
        }
    }
    best.0
}

/// Where the parts go: the category bands, the value mapping, and each
/// part's place across its band.
pub(crate) struct Slots {
    pub bands: Band,
    pub dom: [f64; 2],
    /// Positions of the ends of the value domain.
    pub ends: (f64, f64),
    /// Width of a stacked bar or of a whole group.
    pub thickness: f64,
    /// Width of one bar of a group.
    pub slot: f64,
    pub stacked: bool,
}

impl Slots {
    pub(crate) fn new(
        bands: Band,
        dom: [f64; 2],
        ends: (f64, f64),
        thickness: f64,
        k: usize,
        stacked: bool,
    ) -> Slots {
        let slot = if stacked {
            thickness
        } else {
            thickness / k.max(1) as f64
        };
        Slots {
            bands,
            dom,
            ends,
            thickness,
            slot,
            stacked,
        }
    }

    pub(crate) fn vmap(&self, v: f64) -> f64 {
        map(v, self.dom, self.ends.0, self.ends.1)
    }

    /// Where part `j` of category `c` sits across the category axis.
    pub(crate) fn across(&self, c: usize, j: usize) -> (f64, f64) {
        let centre = self.bands.centre(c);
        if self.stacked {
            (centre - self.thickness / 2.0, centre + self.thickness / 2.0)
        } else {
            let start = centre - self.thickness / 2.0 + j as f64 * self.slot;
            (start + 1.0, start + self.slot - 1.0)
        }
    }
}
