//! Drawing plots into SVG text with plotters, so that every data point can
//! carry a class.
//!
//! [`TaggedSvg`] is a plotters drawing backend that hands every primitive
//! to plotters' own `SVGBackend` (each into a scratch string, whose one
//! element it keeps) and wraps it in `<g class="...">` while a tag is set
//! on its [`Figure`]. So every element is drawn by plotters; this file only
//! adds the group around it and the `<svg>` root with a stable id.
//!
//! Text needs no font: plotters' SVG output writes `<text>` elements that
//! the browser lays out, and plotters' built-in rough width estimate (its
//! `naive` font module, used when no font feature is on) places labels.
//!
//! Invariants: output order is drawing order; nothing depends on the
//! clock, the system's fonts or the locale.

use std::cell::RefCell;
use std::io;
use std::rc::Rc;

use plotters::prelude::{DrawingBackend, SVGBackend};
use plotters_backend::{
    BackendColor, BackendCoord, BackendStyle, BackendTextStyle, DrawingErrorKind,
};

type Drawn = Result<(), DrawingErrorKind<io::Error>>;

/// The plotters backend of one figure.
pub struct TaggedSvg {
    size: (u32, u32),
    out: Rc<RefCell<String>>,
    tag: Rc<RefCell<Option<String>>>,
}

/// One plot being drawn: set tags while drawing, then take the SVG text.
pub struct Figure {
    size: (u32, u32),
    out: Rc<RefCell<String>>,
    tag: Rc<RefCell<Option<String>>>,
}

impl Figure {
    /// A figure of `size` pixels and the backend that draws into it.
    pub fn new(size: (u32, u32)) -> (Figure, TaggedSvg) {
        let out = Rc::new(RefCell::new(String::new()));
        let tag = Rc::new(RefCell::new(None));
        let backend = TaggedSvg {
            size,
            out: Rc::clone(&out),
            tag: Rc::clone(&tag),
        };
        (Figure { size, out, tag }, backend)
    }

    /// Run `draw` with every element it draws in a group of class `class`.
    pub fn tagged<T>(&self, class: &str, draw: impl FnOnce() -> T) -> T {
        *self.tag.borrow_mut() = Some(class.to_string());
        let result = draw();
        *self.tag.borrow_mut() = None;
        result
    }

    /// The SVG document: root with `id`, class `plot` plus `class`, and a
    /// title for screen readers and tooltips.
    pub fn finish(self, id: &str, class: &str, title: &str) -> String {
        let (w, h) = self.size;
        format!(
            "<svg xmlns=\"http://www.w3.org/2000/svg\" id=\"{id}\" class=\"plot {class}\" \
             width=\"{w}\" height=\"{h}\" viewBox=\"0 0 {w} {h}\" role=\"img\">\n<title>{}</title>\n{}</svg>\n",
            super::page::escape(title),
            self.out.borrow()
        )
    }
}

/// The one element plotters wrote between the root's opening and closing
/// tags of a scratch document.
fn inner(doc: &str) -> &str {
    let start = doc.find(">\n").map_or(doc.len(), |i| i + 2);
    let end = doc.rfind("</svg>").unwrap_or(doc.len()).max(start);
    &doc[start..end]
}

impl TaggedSvg {
    fn emit(&mut self, draw: impl FnOnce(&mut SVGBackend<'_>) -> Drawn) -> Drawn {
        let mut scratch = String::new();
        {
            let mut b = SVGBackend::with_string(&mut scratch, self.size);
            draw(&mut b)?;
            b.present()?;
        }
        let element = inner(&scratch);
        if element.is_empty() {
            return Ok(());
        }
        let mut out = self.out.borrow_mut();
        match self.tag.borrow().as_deref() {
            Some(class) => {
                out.push_str(&format!("<g class=\"{class}\">"));
                out.push_str(element.trim_end());
                out.push_str("</g>\n");
            }
            None => out.push_str(element),
        }
        Ok(())
    }
}

impl DrawingBackend for TaggedSvg {
    type ErrorType = io::Error;

    fn get_size(&self) -> (u32, u32) {
        self.size
    }

    fn ensure_prepared(&mut self) -> Drawn {
        Ok(())
    }

    fn present(&mut self) -> Drawn {
        Ok(())
    }

    fn draw_pixel(&mut self, point: BackendCoord, color: BackendColor) -> Drawn {
        self.emit(|b| b.draw_pixel(point, color))
    }

    fn draw_line<S: BackendStyle>(
        &mut self,
        from: BackendCoord,
        to: BackendCoord,
        style: &S,
    ) -> Drawn {
        self.emit(|b| b.draw_line(from, to, style))
    }

    fn draw_rect<S: BackendStyle>(
        &mut self,
        upper_left: BackendCoord,
        bottom_right: BackendCoord,
        style: &S,
        fill: bool,
    ) -> Drawn {
        self.emit(|b| b.draw_rect(upper_left, bottom_right, style, fill))
    }

    fn draw_path<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        path: I,
        style: &S,
    ) -> Drawn {
        self.emit(|b| b.draw_path(path, style))
    }

    fn draw_circle<S: BackendStyle>(
        &mut self,
        center: BackendCoord,
        radius: u32,
        style: &S,
        fill: bool,
    ) -> Drawn {
        self.emit(|b| b.draw_circle(center, radius, style, fill))
    }

    fn fill_polygon<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        vert: I,
        style: &S,
    ) -> Drawn {
        self.emit(|b| b.fill_polygon(vert, style))
    }

    fn draw_text<T: BackendTextStyle>(
        &mut self,
        text: &str,
        style: &T,
        pos: BackendCoord,
    ) -> Drawn {
        self.emit(|b| b.draw_text(text, style, pos))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use plotters::prelude::*;

    #[test]
    fn tagged_elements_are_grouped_and_others_are_not() {
        let (fig, backend) = Figure::new((100, 50));
        {
            let root = backend.into_drawing_area();
            root.fill(&WHITE).unwrap();
            fig.tagged("point validation", || {
                root.draw(&Circle::new((10, 10), 3, BLUE.filled())).unwrap();
                root.draw(&Circle::new((20, 10), 3, BLUE.filled())).unwrap();
            });
            root.draw(&Circle::new((30, 10), 3, RED.filled())).unwrap();
        }
        let svg = fig.finish("plot-x", "curve", "a <test>");
        let doc = roxmltree::Document::parse(&svg).unwrap();
        let groups: Vec<_> = doc
            .descendants()
            .filter(|n| n.attribute("class") == Some("point validation"))
            .collect();
        assert_eq!(groups.len(), 2);
        assert!(
            groups
                .iter()
                .all(|g| g.first_element_child().unwrap().has_tag_name("circle"))
        );
        assert_eq!(
            doc.descendants()
                .filter(|n| n.has_tag_name("circle"))
                .count(),
            3
        );
        assert_eq!(doc.root_element().attribute("id"), Some("plot-x"));
        assert!(svg.contains("<title>a &lt;test&gt;</title>"));
    }
}
