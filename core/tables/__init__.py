"""Tables: pure functions of (working data, table spec) returning a captioned TableResult."""
