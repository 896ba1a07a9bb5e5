//! The equilibration start on the time plots: a vertical line the user can drag, with the part
//! of the run before it dimmed. The plots pan when dragged elsewhere; near the line (within
//! [`GRAB_POINTS`]) a drag moves the line instead.

use super::palette;
use egui_plot::{PlotResponse, PlotUi, VLine};

/// How close to the line, in points, a drag takes hold of it.
pub const GRAB_POINTS: f32 = 6.0;

/// What the user did with the start line this frame (display time units).
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum StartDrag {
    /// The line is being dragged and is now here.
    Moved(f64),
    /// The line was let go here.
    Released(f64),
}

/// The start line's drag state across frames.
#[derive(Clone, Debug, Default)]
pub struct StartLine {
    /// A drag holds the line.
    grabbed: bool,
    /// Each time plot's frame and the line's screen x, as last drawn.
    drawn: Vec<(egui::Rect, f32)>,
    /// Where the last plot's line label was painted (other labels keep clear of it).
    label: Option<egui::Rect>,
}

impl StartLine {
    /// Call before drawing the plots of a frame, with where the line was drawn in the last
    /// one: a press near it takes hold of the line. Returns whether the plots should not pan
    /// this frame (the line is held, or the pointer is near it).
    pub fn begin_frame(&mut self, ui: &egui::Ui, previous: &[(egui::Rect, f32)]) -> bool {
        self.drawn.clear();
        let (pressed, origin, hover) = ui.input(|i| {
            (
                i.pointer.primary_pressed(),
                i.pointer.press_origin(),
                i.pointer.hover_pos(),
            )
        });
        if pressed && origin.is_some_and(|p| near(previous, p)) {
            self.grabbed = true;
        }
        self.grabbed || hover.is_some_and(|p| near(previous, p))
    }

    /// Call after drawing the plots of a frame: a released button lets go of the line.
    pub fn end_frame(&mut self, ui: &egui::Ui) {
        if !ui.input(|i| i.pointer.primary_down()) {
            self.grabbed = false;
        }
    }

    /// Where the line's label was painted on the plot last shown, if it was.
    pub fn label_rect(&self) -> Option<egui::Rect> {
        self.label
    }

    /// The line's positions drawn this frame (the next frame's `previous`).
    pub fn drawn(&self) -> Vec<(egui::Rect, f32)> {
        self.drawn.clone()
    }

    /// Adds the line at display time `start` to a plot being built (the legend leaves it out;
    /// [`StartLine::after_plot`] labels it and the caption under the plots explains it).
    pub fn add_to(p: &mut PlotUi<'_>, start: f64) {
        p.vline(VLine::new("", start).color(palette::START_LINE).width(2.0));
    }

    /// After a plot was shown: dims the part before `start`, labels the line (`manual`: set by
    /// hand), and follows a drag of the line.
    pub fn after_plot<R>(
        &mut self,
        ui: &egui::Ui,
        plot: &PlotResponse<R>,
        start: Option<f64>,
        manual: bool,
    ) -> Option<StartDrag> {
        self.label = None;
        let start = start?;
        let frame = *plot.transform.frame();
        let x = plot.transform.position_from_point_x(start);
        let painter = ui.painter_at(frame);
        if x > frame.left() {
            let dim = egui::Rect::from_min_max(frame.min, egui::pos2(x.min(frame.right()), frame.max.y));
            painter.rect_filled(dim, 0.0, palette::BEFORE_START);
        }
        // Labelled at the top beside the line, on its right in the left part of the plot (the
        // legends sit at the top right), on its left at the bottom further right.
        let (pos, anchor) = if x < frame.center().x {
            (egui::pos2(x + 4.0, frame.top() + 2.0), egui::Align2::LEFT_TOP)
        } else {
            (
                egui::pos2(x - 4.0, frame.bottom() - 2.0),
                egui::Align2::RIGHT_BOTTOM,
            )
        };
        self.label = Some(painter.text(
            pos,
            anchor,
            if manual { "from (set)" } else { "from (detected)" },
            egui::FontId::proportional(11.0),
            palette::START_LINE,
        ));
        self.drawn.push((frame, x));
        let r = &plot.response;
        let here = [(frame, x)];
        if r.hovered()
            && ui
                .input(|i| i.pointer.hover_pos())
                .is_some_and(|p| near(&here, p))
            || self.grabbed && r.dragged()
        {
            ui.ctx().set_cursor_icon(egui::CursorIcon::ResizeHorizontal);
        }
        if !self.grabbed {
            return None;
        }
        let at = |p: egui::Pos2| plot.transform.value_from_position(p).x;
        if r.drag_stopped() {
            let p = ui.input(|i| i.pointer.interact_pos())?;
            return Some(StartDrag::Released(at(p)));
        }
        if r.dragged() {
            let p = ui.input(|i| i.pointer.interact_pos())?;
            return Some(StartDrag::Moved(at(p)));
        }
        None
    }
}

fn near(lines: &[(egui::Rect, f32)], p: egui::Pos2) -> bool {
    lines
        .iter()
        .any(|(rect, x)| rect.contains(p) && (p.x - x).abs() <= GRAB_POINTS)
}
