//! Where an error points, and the range checks that produce those errors: the file's name
//! and text (for line and column), and numbers checked against a range or a monthly list.
//!
//! Section rules (what range applies to which key) live in the section files, not here.

use crate::error::PlanError;
use crate::num::{Num, Typed};

use super::raw::{OneOrMonthly, S};

/// Where errors point: the file's display name and its text (for line/column), and the
/// warnings gathered on the way (a value accepted that the user should change).
pub(super) struct Ctx<'a> {
    pub(super) file: String,
    pub(super) text: &'a str,
    pub(super) warnings: std::cell::RefCell<Vec<String>>,
}

impl Ctx<'_> {
    pub(super) fn line_col(&self, offset: usize) -> (usize, usize) {
        let offset = offset.min(self.text.len());
        let before = &self.text[..offset];
        let line = before.matches('\n').count() + 1;
        let col = before.rsplit('\n').next().map_or(0, |l| l.chars().count()) + 1;
        (line, col)
    }

    /// Records a warning at a place in the file (`file:line:column message`, the form of
    /// the errors); the plan keeps them for stderr.
    pub(super) fn warn(&self, span: std::ops::Range<usize>, message: String) {
        let (line, column) = self.line_col(span.start);
        self.warnings.borrow_mut().push(format!(
            "{}:{line}:{column} {}",
            self.file,
            crate::text::escape_line(&message)
        ));
    }

    pub(super) fn err(
        &self,
        span: std::ops::Range<usize>,
        key: &str,
        message: String,
    ) -> PlanError {
        let (line, column) = self.line_col(span.start);
        PlanError::Invalid {
            file: self.file.clone(),
            line,
            column,
            key: crate::text::escape_line(key).into_owned(),
            message: crate::text::escape_line(&message).into_owned(),
        }
    }

    /// A finite number inside `lo..=hi`.
    pub(super) fn range(&self, v: &S<f64>, key: &str, lo: f64, hi: f64) -> Result<f64, PlanError> {
        let x = *v.get_ref();
        if !x.is_finite() || x < lo || x > hi {
            return Err(self.err(
                v.span(),
                key,
                format!("{key} = {} is outside {} to {}", Typed(x), Num(lo), Num(hi)),
            ));
        }
        Ok(x)
    }

    /// A finite number strictly above `lo` and at most `hi`.
    pub(super) fn above(&self, v: &S<f64>, key: &str, lo: f64, hi: f64) -> Result<f64, PlanError> {
        let x = *v.get_ref();
        if !x.is_finite() || x <= lo || x > hi {
            return Err(self.err(
                v.span(),
                key,
                format!(
                    "{key} = {} must be above {} and at most {}",
                    Typed(x),
                    Num(lo),
                    Num(hi)
                ),
            ));
        }
        Ok(x)
    }

    pub(super) fn opt_range(
        &self,
        v: &Option<S<f64>>,
        key: &str,
        lo: f64,
        hi: f64,
        default: f64,
    ) -> Result<f64, PlanError> {
        match v {
            Some(v) => self.range(v, key, lo, hi),
            None => Ok(default),
        }
    }

    pub(super) fn int_range(
        &self,
        v: &S<i64>,
        key: &str,
        lo: i64,
        hi: i64,
    ) -> Result<i64, PlanError> {
        let x = *v.get_ref();
        if x < lo || x > hi {
            return Err(self.err(
                v.span(),
                key,
                format!("{key} = {x} is outside {lo} to {hi}"),
            ));
        }
        Ok(x)
    }

    pub(super) fn monthly(
        &self,
        v: &S<OneOrMonthly>,
        key: &str,
        lo: f64,
        hi: f64,
        scale: f64,
    ) -> Result<[f64; 12], PlanError> {
        let values: Vec<f64> = match v.get_ref() {
            OneOrMonthly::One(x) => vec![*x; 12],
            OneOrMonthly::Monthly(m) => {
                if m.len() != 12 {
                    return Err(self.err(
                        v.span(),
                        key,
                        format!(
                            "{key} has {} values; give one number or 12 (January first)",
                            m.len()
                        ),
                    ));
                }
                m.clone()
            }
        };
        let mut out = [0.0; 12];
        for (k, x) in values.iter().enumerate() {
            if !x.is_finite() || *x < lo || *x > hi {
                return Err(self.err(
                    v.span(),
                    key,
                    format!(
                        "{key}: month {} = {} is outside {lo} to {hi}",
                        k + 1,
                        Typed(*x)
                    ),
                ));
            }
            out[k] = x * scale;
        }
        Ok(out)
    }
}
