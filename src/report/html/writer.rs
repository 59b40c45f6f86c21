//! A small writer of XHTML-compatible HTML: every element closed, every
//! attribute quoted, every text escaped, so the page parses both as HTML
//! and as XML.

use crate::chart::escape;
use crate::error::{Error, ErrorKind, Result};

/// The page being written, with the stack of open elements.
#[derive(Debug, Default)]
pub(crate) struct Html {
    out: String,
    stack: Vec<&'static str>,
}

fn attributes(out: &mut String, attrs: &[(&str, &str)]) {
    for (k, v) in attrs {
        out.push(' ');
        out.push_str(k);
        out.push_str("=\"");
        out.push_str(&escape(v));
        out.push('"');
    }
}

impl Html {
    /// A page starting with the HTML5 doctype.
    pub fn new() -> Html {
        Html {
            out: "<!DOCTYPE html>\n".to_string(),
            stack: Vec::new(),
        }
    }

    /// Opens `tag` with `attrs` (names are literals; values are escaped).
    pub fn open(&mut self, tag: &'static str, attrs: &[(&str, &str)]) -> &mut Self {
        self.out.push('<');
        self.out.push_str(tag);
        attributes(&mut self.out, attrs);
        self.out.push('>');
        self.stack.push(tag);
        self
    }

    /// Closes the innermost element, which must be `tag`.
    pub fn close(&mut self, tag: &'static str) -> &mut Self {
        let top = self.stack.pop();
        debug_assert_eq!(top, Some(tag), "closing <{tag}> out of order");
        self.out.push_str("</");
        self.out.push_str(top.unwrap_or(tag));
        self.out.push('>');
        if matches!(
            tag,
            "tr" | "p"
                | "li"
                | "section"
                | "table"
                | "figure"
                | "head"
                | "ul"
                | "dl"
                | "dd"
                | "h1"
                | "h2"
                | "h3"
        ) {
            self.out.push('\n');
        }
        self
    }

    /// An element with no content, written self-closed (`<meta .../>`).
    pub fn void(&mut self, tag: &'static str, attrs: &[(&str, &str)]) -> &mut Self {
        self.out.push('<');
        self.out.push_str(tag);
        attributes(&mut self.out, attrs);
        self.out.push_str("/>\n");
        self
    }

    /// Escaped text.
    pub fn text(&mut self, t: &str) -> &mut Self {
        self.out.push_str(&escape(t));
        self
    }

    /// `<tag attrs>text</tag>`.
    pub fn el(&mut self, tag: &'static str, attrs: &[(&str, &str)], text: &str) -> &mut Self {
        self.open(tag, attrs).text(text).close(tag)
    }

    /// A chart's SVG document, inline. The SVG namespace declaration is
    /// dropped: the HTML parser puts `<svg>` in that namespace by itself,
    /// and the page then names no URL at all.
    pub fn svg(&mut self, svg: &str) -> &mut Self {
        self.out
            .push_str(&svg.replacen(" xmlns=\"http://www.w3.org/2000/svg\"", "", 1));
        self
    }

    /// The page.
    ///
    /// # Errors
    /// An element left open (a bug).
    pub fn finish(self) -> Result<String> {
        if let Some(open) = self.stack.last() {
            return Err(Error::msg(
                ErrorKind::InvalidInput,
                format!("HTML report: <{open}> left open"),
            ));
        }
        Ok(self.out)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn text_and_attributes_are_escaped() -> Result<()> {
        let mut h = Html::new();
        h.open("p", &[("title", "a\"b<c")])
            .text("x & <y>")
            .close("p");
        let s = h.finish()?;
        assert!(s.contains("<p title=\"a&quot;b&lt;c\">x &amp; &lt;y&gt;</p>"));
        Ok(())
    }

    #[test]
    fn an_open_element_is_an_error() {
        let mut h = Html::new();
        h.open("div", &[]);
        assert!(h.finish().is_err());
    }
}
