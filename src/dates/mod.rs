//! Calendar, day counts and the premium schedule.
