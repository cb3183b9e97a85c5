//! What the recorder shows: a full-screen terminal display (position in px and mm, spot quality,
//! frame rate, dropped frames, elapsed time, a plot of the last minutes) or, when output is not a
//! terminal, one plain status line every few seconds. The text is built by pure functions so it can be
//! checked without a terminal.

use super::live::{Latest, LiveCounts};
use super::trace::TraceHistory;
use super::RecordError;
use crossterm::{cursor, execute, queue, style, terminal};
use std::io::Write;

/// Everything the display shows at one moment.
pub struct Snapshot<'a> {
    pub out: &'a str,
    pub source: &'a str,
    /// Wall-clock time since the session started, s.
    pub elapsed_s: f64,
    pub latest: Option<&'a Latest>,
    pub counts: &'a LiveCounts,
    pub fps: Option<f64>,
    pub events: u64,
    pub last_event: Option<(f64, &'a str)>,
    pub kept: u64,
    pub history: &'a TraceHistory,
    pub has_mm: bool,
    /// Set while the source is not delivering.
    pub fault: Option<&'a str>,
}

/// `h:mm:ss`.
pub fn clock(s: f64) -> String {
    let s = if s.is_finite() && s > 0.0 {
        s as u64
    } else {
        0
    };
    format!("{}:{:02}:{:02}", s / 3600, (s / 60) % 60, s % 60)
}

fn position_text(l: Option<&Latest>, has_mm: bool) -> String {
    let Some(l) = l else {
        return "no frame yet".into();
    };
    let px = match l.fix.position {
        Some(p) => format!("x {:9.3} px  y {:9.3} px", p.x, p.y),
        None => "no spot".into(),
    };
    let mm = match (has_mm, l.screen) {
        (true, Some(s)) => format!("   x {:9.4} mm  y {:9.4} mm", s.x_mm, s.y_mm),
        (true, None) => "   (no mm)".into(),
        (false, _) => String::new(),
    };
    format!("{px}{mm}")
}

fn quality_text(l: Option<&Latest>) -> String {
    match l {
        Some(l) => format!(
            "{:<10} snr {:7.1}  peak {:7.1}  width {:5.2} px  clipped {} px",
            l.fix.status.as_str(),
            l.fix.snr,
            l.fix.peak,
            l.fix.width_px,
            l.fix.saturated_px
        ),
        None => "-".into(),
    }
}

fn found_percent(c: &LiveCounts) -> f64 {
    if c.rows == 0 {
        0.0
    } else {
        100.0 * c.found as f64 / c.rows as f64
    }
}

/// One plain status line.
pub fn status_line(s: &Snapshot) -> String {
    let t = s
        .latest
        .map_or("-".to_string(), |l| format!("{:.3}", l.t.0));
    let mut line = format!(
        "[{}] frame {} t_s {} | {} | {} | {} fps, dropped {}, unreadable {}, gaps {} | found {:.1}% | events {} | kept {}",
        clock(s.elapsed_s),
        s.latest.map_or(0, |l| l.frame),
        t,
        position_text(s.latest, s.has_mm),
        s.latest.map_or("-", |l| l.fix.status.as_str()),
        s.fps.map_or("-".to_string(), |f| format!("{f:.1}")),
        s.counts.dropped,
        s.counts.unreadable,
        s.counts.gaps,
        found_percent(s.counts),
        s.events,
        s.kept,
    );
    if let Some(f) = s.fault {
        line.push_str(&format!(" | NO FRAMES: {f}"));
    }
    line
}

/// A plot of the binned trace, `width` x `height` characters, newest at the right. Each column shows
/// the bin's range as a bar of `|` and its mean as `*`.
pub fn render_plot(h: &TraceHistory, width: usize, height: usize) -> Vec<String> {
    let width = width.max(8);
    let height = height.max(3);
    let mut grid = vec![vec![' '; width]; height];
    let Some((lo, hi)) = h.range() else {
        let mut rows: Vec<String> = grid.into_iter().map(|r| r.into_iter().collect()).collect();
        rows[height / 2] = format!("{:^width$}", "(no positions yet)");
        return rows;
    };
    let span = if hi > lo { hi - lo } else { 1.0 };
    let row_of = |v: f64| -> usize {
        let f = ((v - lo) / span).clamp(0.0, 1.0);
        // Row 0 is the top.
        (height - 1) - (f * (height - 1) as f64).round() as usize
    };
    let bins: Vec<_> = h.bins().collect();
    let n = bins.len();
    // Newest bin in the last column; older ones to the left, one per column.
    for (k, b) in bins.iter().enumerate().skip(n.saturating_sub(width)) {
        let col = width - (n - k);
        let (top, bottom) = (row_of(b.max), row_of(b.min));
        for row in grid.iter_mut().take(bottom + 1).skip(top) {
            row[col] = '|';
        }
        grid[row_of(b.mean())][col] = '*';
    }
    grid.into_iter().map(|r| r.into_iter().collect()).collect()
}

/// The whole screen as lines, for a terminal of `cols` x `rows`.
pub fn render_screen(s: &Snapshot, cols: usize, rows: usize) -> Vec<String> {
    let cols = cols.max(40);
    let unit = if s.has_mm { "mm" } else { "px" };
    let mut lines = vec![
        format!(
            "spotlever record  {}   elapsed {}",
            s.out,
            clock(s.elapsed_s)
        ),
        format!("source    {}", s.source),
        format!("position  {}", position_text(s.latest, s.has_mm)),
        format!("spot      {}", quality_text(s.latest)),
        format!(
            "frames    {} rows, found {:.1}%, {} fps, dropped {}, unreadable {}, gaps {}, kept {}",
            s.counts.rows,
            found_percent(s.counts),
            s.fps.map_or("-".to_string(), |f| format!("{f:.1}")),
            s.counts.dropped,
            s.counts.unreadable,
            s.counts.gaps,
            s.kept
        ),
        format!(
            "events    {}{}",
            s.events,
            s.last_event.map_or(String::new(), |(t, l)| format!(
                " (last: {l} at t_s {t:.1})"
            ))
        ),
    ];
    if let Some(f) = s.fault {
        lines.push(format!("NO FRAMES  {f} - retrying"));
    }
    let plot_h = rows.saturating_sub(lines.len() + 4).clamp(3, 20);
    let (lo, hi) = s.history.range().unwrap_or((0.0, 0.0));
    lines.push(format!(
        "x over the last {:.0} min ({unit}): {lo:.3} .. {hi:.3}",
        s.history.span_s() / 60.0
    ));
    lines.extend(render_plot(s.history, cols - 2, plot_h));
    lines.push("keys: m = mark mass move   q = stop and close the run".into());
    lines
        .into_iter()
        .map(|l| l.chars().take(cols).collect())
        .collect()
}

/// The full-screen display. Leaving it (also on an error path) restores the terminal.
pub struct TerminalView {
    out: std::io::Stdout,
}

impl TerminalView {
    pub fn enter() -> Result<Self, RecordError> {
        terminal::enable_raw_mode().map_err(RecordError::Terminal)?;
        let mut out = std::io::stdout();
        if let Err(e) = execute!(out, terminal::EnterAlternateScreen, cursor::Hide) {
            let _ = terminal::disable_raw_mode();
            return Err(RecordError::Terminal(e));
        }
        Ok(Self { out })
    }

    pub fn draw(&mut self, s: &Snapshot) -> Result<(), RecordError> {
        let (cols, rows) = terminal::size().unwrap_or((80, 24));
        let lines = render_screen(s, cols as usize, rows as usize);
        queue!(self.out, cursor::MoveTo(0, 0)).map_err(RecordError::Terminal)?;
        for (i, l) in lines.iter().enumerate().take(rows as usize) {
            queue!(
                self.out,
                cursor::MoveTo(0, i as u16),
                terminal::Clear(terminal::ClearType::CurrentLine),
                style::Print(l)
            )
            .map_err(RecordError::Terminal)?;
        }
        queue!(
            self.out,
            terminal::Clear(terminal::ClearType::FromCursorDown)
        )
        .map_err(RecordError::Terminal)?;
        self.out.flush().map_err(RecordError::Terminal)
    }
}

impl Drop for TerminalView {
    fn drop(&mut self) {
        let _ = execute!(self.out, cursor::Show, terminal::LeaveAlternateScreen);
        let _ = terminal::disable_raw_mode();
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::spot::{SpotFix, SpotStatus};
    use crate::units::{PixelPoint, Seconds};

    #[test]
    fn plot_puts_highs_on_top_and_newest_right() {
        let mut h = TraceHistory::new(10.0, 10);
        for i in 0..10 {
            h.push(i as f64 + 0.5, i as f64);
        }
        let p = render_plot(&h, 10, 5);
        assert_eq!(p.len(), 5);
        // The rising trace: lowest value bottom-left, highest top-right.
        assert_eq!(p[4].chars().next(), Some('*'));
        assert_eq!(p[0].chars().last(), Some('*'));
        assert_eq!(p[0].chars().next(), Some(' '));
        let empty = render_plot(&TraceHistory::new(10.0, 10), 30, 3);
        assert!(empty[1].contains("no positions yet"));
    }

    #[test]
    fn status_line_and_screen_show_the_numbers() {
        let latest = Latest {
            frame: 42,
            t: Seconds(1.5),
            fix: SpotFix {
                position: Some(PixelPoint { x: 100.25, y: 50.5 }),
                peak: 200.0,
                integral: 5000.0,
                width_px: 2.5,
                saturated_px: 0,
                snr: 80.0,
                status: SpotStatus::Ok,
            },
            screen: None,
        };
        let counts = LiveCounts {
            rows: 43,
            found: 43,
            dropped: 2,
            ..Default::default()
        };
        let h = TraceHistory::new(300.0, 100);
        let s = Snapshot {
            out: "run1",
            source: "replay",
            elapsed_s: 3725.0,
            latest: Some(&latest),
            counts: &counts,
            fps: Some(29.97),
            events: 1,
            last_event: Some((1.0, "move")),
            kept: 2,
            history: &h,
            has_mm: false,
            fault: None,
        };
        let line = status_line(&s);
        for part in [
            "[1:02:05]",
            "frame 42",
            "x   100.250 px",
            "30.0 fps",
            "dropped 2",
            "events 1",
        ] {
            assert!(line.contains(part), "{part} missing in {line}");
        }
        let screen = render_screen(&s, 100, 30);
        assert!(screen.iter().any(|l| l.contains("m = mark mass move")));
        assert!(screen.iter().all(|l| l.chars().count() <= 100));
    }
}
