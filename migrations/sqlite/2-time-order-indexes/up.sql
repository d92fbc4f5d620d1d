-- sumpbook schema, version 2: indexes for reading samples and events in time order across the
-- shop (export, the fleet as it stood at a date), as checks already have. Rows are unchanged.

CREATE INDEX samples_sampled_at ON samples (sampled_at, unit_id);
CREATE INDEX events_done_at ON events (done_at, unit_id, kind);
DROP INDEX checks_taken_at;
CREATE INDEX checks_taken_at ON checks (taken_at, unit_id);
