//! One report type per command.
