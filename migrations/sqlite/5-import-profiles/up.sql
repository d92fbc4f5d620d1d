-- sumpbook schema, version 5: column-mapping profiles for importing files whose columns are
-- named their own way (a lab's "Sample Date", "Visc @ 40C (cSt)").
--
-- One row per profile, named by the user (one per lab or particle counter). `header` is the
-- file's header line as a JSON array of its column names, so that a file with the same header
-- is read through the same profile next time; `columns` is a JSON array of
-- [file column, sumpbook column or "ignore"]; `date_order` says how the file writes its dates.
-- A profile is a way of reading files, not evidence: saving one under the same name replaces
-- it, and it has no edit history.

CREATE TABLE import_profiles (
    id         INTEGER PRIMARY KEY,
    name       TEXT NOT NULL UNIQUE CONSTRAINT "name: must not be empty" CHECK (length(trim(name)) > 0),
    kind       TEXT NOT NULL CONSTRAINT "kind: must be units, checks, samples or events"
               CHECK (kind IN ('units', 'checks', 'samples', 'events')),
    header     TEXT NOT NULL CONSTRAINT "header: must be a JSON array" CHECK (json_valid(header) AND json_type(header) = 'array'),
    columns    TEXT NOT NULL CONSTRAINT "columns: must be a JSON array" CHECK (json_valid(columns) AND json_type(columns) = 'array'),
    date_order TEXT NOT NULL CONSTRAINT "date_order: must be iso, day-first or month-first"
               CHECK (date_order IN ('iso', 'day-first', 'month-first')),
    saved_at   TEXT NOT NULL CONSTRAINT "saved_at: must be UTC 'YYYY-MM-DDTHH:MM:SSZ'"
               CHECK (strftime('%Y-%m-%dT%H:%M:%SZ', unixepoch(saved_at), 'unixepoch') IS saved_at)
) STRICT;
