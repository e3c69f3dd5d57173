//! Where the state-change labels go: in lanes above the data, each at its change's line
//! where it fits, never past the frame and never over another label.

/// Width of one character of the labels' font as a share of its size: above the mean
/// advance of the common sans-serif faces (about 0.55 em for lower-case text; common
/// practice), so that the boxes are on the safe side.
pub(crate) const CHAR_EM: f64 = 0.62;

/// Pixels kept free between two labels of a lane.
const GAP_PX: f64 = 6.0;

/// A label placed: its left edge (px), lane (0 = nearest the data) and text.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Placed {
    pub(crate) left_px: f64,
    pub(crate) lane: usize,
    pub(crate) text: String,
}

/// Width of `text` in pixels at font size `size_px` (see [`CHAR_EM`]).
pub(crate) fn width_px(text: &str, size_px: f64) -> f64 {
    text.chars().count() as f64 * size_px * CHAR_EM
}

/// Places `labels` ((line x px, text), in any order) in `lanes` lanes between `left` and
/// `right` px: each starts just right of its line, or ends at `right` when it would
/// cross it, in the first lane where it keeps [`GAP_PX`] from the labels already there.
/// Returns the placed labels and the number that found no room.
pub(crate) fn place(
    labels: &[(f64, String)],
    left: f64,
    right: f64,
    lanes: usize,
    size_px: f64,
) -> (Vec<Placed>, usize) {
    let mut order: Vec<&(f64, String)> = labels.iter().collect();
    order.sort_by(|a, b| a.0.total_cmp(&b.0));
    // the right edge of the last label in each lane
    let mut ends = vec![f64::NEG_INFINITY; lanes];
    let mut placed = Vec::new();
    let mut skipped = 0;
    for (x, text) in order {
        let w = width_px(text, size_px);
        let start = (x + 3.0).min(right - w).max(left);
        let lane = ends.iter().position(|end| start >= end + GAP_PX);
        match lane {
            Some(lane) if start + w <= right => {
                if let Some(end) = ends.get_mut(lane) {
                    *end = start + w;
                }
                placed.push(Placed {
                    left_px: start,
                    lane,
                    text: text.clone(),
                });
            }
            _ => skipped += 1,
        }
    }
    (placed, skipped)
}
