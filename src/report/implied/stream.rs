//! `implied` over a long history, a chunk of dates at a time (see
//! [`crate::report::stream`]).

use super::{
    build_dates, csv_table, model_field, CsvColumns, ImpliedDate, ImpliedOptions, ImpliedReport,
    RunSummary,
};
use crate::curve::MarketOptions;
use crate::error::Error;
use crate::loss::PoolModel;
use crate::output::{Report, Table};
use crate::report::stream::HistoryPlan;
use serde::{Serialize, Serializer};

/// A chunk of dates of an `implied` report: the dates in order, printed as
/// the part of the whole report they are (the CSV has the whole run's
/// columns).
#[derive(Debug, Clone, PartialEq)]
pub struct ImpliedPart {
    report: ImpliedReport,
    columns: CsvColumns,
}

impl ImpliedPart {
    /// The chunk's dates.
    pub fn dates(&self) -> &[ImpliedDate] {
        &self.report.dates
    }
}

impl Serialize for ImpliedPart {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        self.report.serialize(s)
    }
}

impl Report for ImpliedPart {
    fn sections(&self) -> Vec<Table> {
        self.report.sections()
    }

    fn csv(&self) -> Table {
        csv_table(&self.report.dates, self.columns)
    }
}

/// Implied correlations of every date of a history read in two passes
/// ([`crate::report::stream::plan`]): the dates come a chunk at a time,
/// each chunk's dates in parallel (rayon), and each chunk goes to `emit`
/// in date order, to be printed and dropped; `done` is called as each date
/// is finished. Put together, the chunks are the report
/// [`super::build_with_progress`] gives for the file read whole, and the
/// summary is its [`ImpliedReport::summary`].
///
/// # Errors
/// Before any chunk: as [`super::build_with`] (the tolerance, then every
/// curve error); then an error of `emit`, the first date's pricing error
/// of a chunk, or the file changing between the passes.
pub fn build_streamed<E: From<Error>>(
    plan: &HistoryPlan,
    opts: &MarketOptions,
    implied: &ImpliedOptions,
    done: &(dyn Fn() + Sync),
    emit: &mut dyn FnMut(&ImpliedPart) -> Result<(), E>,
) -> Result<RunSummary, E> {
    implied.check()?;
    plan.curves()?;
    // The columns the whole report's CSV has: `model` on every date in a
    // pool of n names, the large pool's beside every tranche with
    // --compare-pool.
    let in_names = implied.model != PoolModel::LargePool;
    let columns = CsvColumns {
        model: model_field(implied.model).is_some(),
        large_pool: in_names && implied.compare_pool && plan.tranches() > 0,
    };
    let mut summary = RunSummary::default();
    plan.for_each_chunk(
        &|chunk| build_dates(chunk, plan.path(), opts, implied, done),
        &mut |dates: Vec<ImpliedDate>| {
            for d in &dates {
                summary.add(d);
            }
            emit(&ImpliedPart {
                report: ImpliedReport { dates },
                columns,
            })
        },
    )?;
    Ok(summary)
}
