//! Tables: measuring, wrapping and drawing table rows in the flowing layout, header repeated on
//! each continuation page. It must not know units, health or the store.

use super::*;

impl Layout<'_> {
    /// Height a table row takes with these cells and column widths.
    fn row_height(&self, cells: &[Cell], widths: &[f32], sz: f32, header: bool) -> f32 {
        let lines = cells
            .iter()
            .zip(widths)
            .map(|(c, w)| self.cell_lines(c, *w, sz, header).len())
            .max()
            .unwrap_or(1)
            .max(1);
        lines as f32 * sz * size::LEADING + CELL_PAD * 2.0
    }

    fn cell_lines(&self, cell: &Cell, width: f32, sz: f32, header: bool) -> Vec<(Face, String)> {
        let face = if cell.bold || header {
            Face::Bold
        } else {
            Face::Regular
        };
        let avail =
            (width - 2.0 * CELL_PAD - if cell.mark.is_some() { sz + 2.0 } else { 0.0 }).max(sz);
        let mut lines: Vec<(Face, String)> = self
            .fonts
            .wrap(face, sz, &cell.text, avail)
            .into_iter()
            .map(|l| (face, l))
            .collect();
        if let Some(sub) = &cell.sub {
            lines.extend(
                self.fonts
                    .wrap(Face::Regular, sz, sub, avail)
                    .into_iter()
                    .map(|l| (Face::Regular, l)),
            );
        }
        lines
    }

    /// Height `table` takes when it does not break.
    pub fn table_height(
        &self,
        fractions: &[f32],
        header: &[Cell],
        rows: &[Vec<Cell>],
        sz: f32,
    ) -> f32 {
        let total: f32 = fractions.iter().sum();
        let widths: Vec<f32> = fractions
            .iter()
            .map(|f| f / total * self.content_w())
            .collect();
        self.row_height(header, &widths, sz, true)
            + rows
                .iter()
                .map(|r| self.row_height(r, &widths, sz, false))
                .sum::<f32>()
    }

    /// Height `paragraph` takes.
    pub fn paragraph_height(&self, face: Face, sz: f32, indent: f32, text: &str) -> f32 {
        self.fonts
            .wrap(face, sz, text, self.content_w() - indent)
            .len() as f32
            * sz
            * size::LEADING
    }

    /// Height `heading` takes.
    pub fn heading_height(&self, text: &str) -> f32 {
        self.fonts
            .wrap(Face::Bold, size::HEADING, text, self.content_w())
            .len() as f32
            * size::HEADING
            * size::LEADING
            + 2.0
    }

    /// Height `sign_off` takes with `rows` rows: room above each rule to write in.
    pub fn sign_off_height(&self, rows: usize, sz: f32) -> f32 {
        rows as f32 * (sz * 3.4 + 4.0)
    }

    /// Draws lines `from..to` of a row whose cells are already wrapped; marks go with the
    /// first line.
    #[allow(clippy::too_many_arguments)]
    fn draw_row_lines(
        &mut self,
        cells: &[WrappedCell],
        widths: &[f32],
        sz: f32,
        from: usize,
        to: usize,
        shade: Option<Rgbf>,
        header: bool,
    ) {
        let h = (to - from).max(1) as f32 * sz * size::LEADING + CELL_PAD * 2.0;
        let top = self.y;
        let (fonts, left, cw) = (self.fonts, self.left(), self.content_w());
        if let Some(fill) = shade {
            self.page().rect(left, top, cw, h, Some(fill), None);
        }
        let mut x = left;
        for ((mark, lines), w) in cells.iter().zip(widths) {
            let mut tx = x + CELL_PAD;
            if let Some(m) = mark {
                if from == 0 {
                    self.page()
                        .mark(*m, tx + sz * 0.45, top + CELL_PAD + sz * 0.55, sz * 0.9);
                }
                tx += sz + 2.0;
            }
            for (i, (face, l)) in lines.iter().enumerate().take(to).skip(from) {
                let base = top + CELL_PAD + sz + (i - from) as f32 * sz * size::LEADING;
                self.page().text(fonts, *face, sz, BLACK, tx, base, l);
            }
            x += w;
        }
        let line = Stroke::solid(
            if header { 0.8 } else { 0.3 },
            if header { DARK } else { LIGHT },
        );
        self.page().line(left, top + h, left + cw, top + h, &line);
        self.y += h;
    }

    fn wrapped_row(
        &self,
        cells: &[Cell],
        widths: &[f32],
        sz: f32,
        header: bool,
    ) -> Vec<WrappedCell> {
        cells
            .iter()
            .zip(widths)
            .map(|(c, w)| (c.mark, self.cell_lines(c, *w, sz, header)))
            .collect()
    }

    /// A table with a header row repeated on each page it runs onto. `fractions` are the
    /// column widths as parts of the content width. Rows wrap their cells and move whole to
    /// the next page when they do not fit; only a row taller than a whole page is split,
    /// between lines, so nothing is ever cut off.
    pub fn table(&mut self, fractions: &[f32], header: &[Cell], rows: &[Vec<Cell>], sz: f32) {
        let total: f32 = fractions.iter().sum();
        let widths: Vec<f32> = fractions
            .iter()
            .map(|f| f / total * self.content_w())
            .collect();
        let head = self.wrapped_row(header, &widths, sz, true);
        let head_lines = head.iter().map(|c| c.1.len()).max().unwrap_or(1).max(1);
        let line_h = sz * size::LEADING;
        let head_h = head_lines as f32 * line_h + CELL_PAD * 2.0;
        let first_h = rows
            .first()
            .map_or(0.0, |r| self.row_height(r, &widths, sz, false));
        self.ensure(head_h + first_h.min(self.page_capacity() - head_h));
        self.draw_row_lines(&head, &widths, sz, 0, head_lines, Some(FAINT), true);
        for (i, row) in rows.iter().enumerate() {
            let cells = self.wrapped_row(row, &widths, sz, false);
            let n = cells.iter().map(|c| c.1.len()).max().unwrap_or(1).max(1);
            let h = n as f32 * line_h + CELL_PAD * 2.0;
            let shade = if i % 2 == 1 {
                Some(Rgbf(0.975, 0.975, 0.975))
            } else {
                None
            };
            let fits_on_a_page = h <= self.page_capacity() - head_h - size::TITLE * 2.0;
            if self.y + h > self.bottom() && fits_on_a_page {
                self.break_page();
                self.draw_row_lines(&head, &widths, sz, 0, head_lines, Some(FAINT), true);
            }
            let mut from = 0;
            while from < n {
                let room = ((self.bottom() - self.y - CELL_PAD * 2.0) / line_h)
                    .floor()
                    .max(0.0) as usize;
                if room == 0 {
                    self.break_page();
                    self.draw_row_lines(&head, &widths, sz, 0, head_lines, Some(FAINT), true);
                    continue;
                }
                let to = (from + room).min(n);
                self.draw_row_lines(&cells, &widths, sz, from, to, shade, false);
                from = to;
            }
        }
    }
}
