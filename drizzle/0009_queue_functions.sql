-- The queue runner's two hot statements (lib/queue/runner.ts), kept as PL/pgSQL functions so the
-- database parses and plans them once per connection and reuses the plan: as plain statements each
-- call re-parsed and re-planned a large CTE (≈7–11 ms per call on the embedded database, measured
-- with EXPLAIN ANALYZE: ≈4 ms planning, <1 ms execution), which on a machine whose cores all run
-- simulation threads added straight to a sweep's wall time. Written by hand: drizzle-kit does not
-- generate functions. A later change to either function is a new migration with CREATE OR REPLACE.
-- Runs after 0008_results_cursor, which adds the sweep_results.recorded_seq column used below.

-- Claim up to p_limit queued chunks for runner p_owner with a lease of p_lease_s seconds. Fair
-- share: chunks are dealt out between studios in turn (each studio's k-th chunk before anyone's
-- (k+1)-th), the studio with the fewest chunks running and then the one served longest ago first.
-- A queued sweep is eligible only while its studio runs fewer sweeps than its limit
-- (studio_quotas.max_running_sweeps, else p_default_max_running). A queued sweep among the claimed
-- chunks is then started here, the limit re-checked under a lock on its studio row, so runners in
-- several processes cannot together start one sweep too many; when refused, its chunks go back to
-- the queue with their attempt not counted and are not returned. sweep_status is the sweep's status
-- before the claim.
CREATE OR REPLACE FUNCTION kickdrift_claim_chunks(p_owner text, p_lease_s double precision, p_limit integer, p_default_max_running integer)
RETURNS TABLE (id integer, sweep_id text, chunk_index integer, first_cell integer, cell_count integer, attempts integer, sweep_status text)
LANGUAGE plpgsql SET plan_cache_mode = force_generic_plan AS $$
#variable_conflict use_column
DECLARE
  v_ids integer[];
  v_sweeps text[];
  v_indexes integer[];
  v_firsts integer[];
  v_counts integer[];
  v_attempts integer[];
  v_statuses text[];
  v_start record;
  v_status text;
  v_max integer;
  v_running integer;
  v_refused text[] := '{}';
BEGIN
  WITH busy AS (
    SELECT s2.studio_id, count(*) AS n FROM sweep_chunks c2 JOIN sweeps s2 ON s2.id = c2.sweep_id WHERE c2.status = 'running' GROUP BY s2.studio_id
  ), slots AS (
    SELECT s3.studio_id, count(*) AS n FROM sweeps s3 WHERE s3.status = 'running' GROUP BY s3.studio_id
  ), ranked AS (
    SELECT c.id, row_number() OVER (PARTITION BY s.studio_id ORDER BY s.created_at, c.sweep_id, c.chunk_index) AS turn,
      coalesce(busy.n, 0) AS busy, st.last_chunk_claimed_at AS served, s.created_at, c.sweep_id, c.chunk_index
    FROM sweep_chunks c JOIN sweeps s ON s.id = c.sweep_id JOIN studios st ON st.id = s.studio_id
      LEFT JOIN studio_quotas q ON q.studio_id = s.studio_id LEFT JOIN busy ON busy.studio_id = s.studio_id LEFT JOIN slots ON slots.studio_id = s.studio_id
    WHERE c.status = 'queued' AND s.status IN ('queued', 'running') AND st.status = 'active'
      AND (s.status = 'running' OR coalesce(slots.n, 0) < coalesce(q.max_running_sweeps, p_default_max_running))
  ), claimed AS (
    UPDATE sweep_chunks SET status = 'running', lease_owner = p_owner,
      lease_expires_at = now() + make_interval(secs => p_lease_s), attempts = sweep_chunks.attempts + 1
    WHERE sweep_chunks.id IN (
      SELECT c.id FROM sweep_chunks c JOIN ranked r ON r.id = c.id
      WHERE c.status = 'queued'
      ORDER BY r.turn, r.busy, r.served NULLS FIRST, r.created_at, r.sweep_id, r.chunk_index
      LIMIT p_limit FOR UPDATE OF c SKIP LOCKED)
    RETURNING sweep_chunks.id, sweep_chunks.sweep_id, sweep_chunks.chunk_index, sweep_chunks.first_cell, sweep_chunks.cell_count, sweep_chunks.attempts
  ), served AS (
    -- Runs although nothing reads it: a data-modifying WITH always runs to completion.
    UPDATE studios SET last_chunk_claimed_at = clock_timestamp()
    WHERE studios.id IN (SELECT s4.studio_id FROM sweeps s4 WHERE s4.id IN (SELECT cl.sweep_id FROM claimed cl))
    RETURNING studios.id
  )
  SELECT array_agg(cl.id), array_agg(cl.sweep_id), array_agg(cl.chunk_index), array_agg(cl.first_cell), array_agg(cl.cell_count), array_agg(cl.attempts), array_agg(s.status)
  INTO v_ids, v_sweeps, v_indexes, v_firsts, v_counts, v_attempts, v_statuses
  FROM claimed cl JOIN sweeps s ON s.id = cl.sweep_id;
  IF v_ids IS NULL THEN
    RETURN;
  END IF;

  FOR v_start IN
    SELECT DISTINCT u.sid, sw.studio_id FROM unnest(v_sweeps, v_statuses) AS u(sid, st) JOIN sweeps sw ON sw.id = u.sid WHERE u.st = 'queued'
  LOOP
    PERFORM 1 FROM studios WHERE studios.id = v_start.studio_id FOR UPDATE;
    -- Another runner may have started it while this one waited for the lock.
    SELECT sw.status INTO v_status FROM sweeps sw WHERE sw.id = v_start.sid;
    CONTINUE WHEN v_status IS DISTINCT FROM 'queued';
    v_max := coalesce((SELECT q.max_running_sweeps FROM studio_quotas q WHERE q.studio_id = v_start.studio_id), p_default_max_running);
    SELECT count(*) INTO v_running FROM sweeps sw WHERE sw.studio_id = v_start.studio_id AND sw.status = 'running';
    IF v_running >= v_max THEN
      UPDATE sweep_chunks SET status = 'queued', lease_owner = NULL, lease_expires_at = NULL, attempts = greatest(sweep_chunks.attempts - 1, 0)
      WHERE sweep_chunks.id = ANY (v_ids) AND sweep_chunks.sweep_id = v_start.sid AND sweep_chunks.lease_owner = p_owner;
      v_refused := v_refused || v_start.sid;
    ELSE
      UPDATE sweeps SET status = 'running', started_at = coalesce(sweeps.started_at, now()) WHERE sweeps.id = v_start.sid AND sweeps.status = 'queued';
    END IF;
  END LOOP;

  RETURN QUERY
  SELECT u.id, u.sweep_id, u.chunk_index, u.first_cell, u.cell_count, u.attempts, u.sweep_status
  FROM unnest(v_ids, v_sweeps, v_indexes, v_firsts, v_counts, v_attempts, v_statuses) AS u(id, sweep_id, chunk_index, first_cell, cell_count, attempts, sweep_status)
  WHERE NOT (u.sweep_id = ANY (v_refused))
  ORDER BY u.sweep_id, u.chunk_index;
END $$;
--> statement-breakpoint

-- Record a finished chunk: lock the studio (one debit writer per studio at a time, as
-- lib/billing/usage.ts does), lock the sweep, mark the chunk done (only if runner p_owner still
-- holds it and the sweep was not stopped), upsert its results row (a new row takes its change
-- cursor recorded_seq from the column's default; a partial row made complete takes a new value of
-- the same sequence, so the cells route's `after=` readers see it again), add the chunk to the sweep's
-- counters and verdict totals (p_tally: verdict → cells), and — only when the chunk is far from
-- every limit ("easy": the balance stays above p_low_balance_ms and this month's usage stays under
-- p_first_alert_percent of the monthly cap) — insert its ledger debit under p_key (idempotent).
-- With p_only_if_easy, a chunk that is not easy is left untouched (recorded = 0, easy = 0), so the
-- easy case can run as one statement on its own and the caller redoes the rest in a transaction of
-- its own. Returns whether the chunk was recorded, the sweep's new and previous status, and whether
-- the debit was made here (easy = 1) or is left to the caller's careful path in the same transaction.
CREATE OR REPLACE FUNCTION kickdrift_record_chunk(
  p_owner text, p_chunk_id integer, p_sweep_id text, p_studio_id text,
  p_cells_in_blob integer, p_cells_run integer, p_compute_ms bigint,
  p_bytes integer, p_location text, p_data bytea, p_tally jsonb,
  p_key text, p_memo text, p_month_start timestamptz, p_month_end timestamptz,
  p_low_balance_ms bigint, p_default_cap_ms bigint, p_first_alert_percent integer, p_only_if_easy boolean)
RETURNS TABLE (recorded integer, new_status text, sweep_status text, easy integer)
LANGUAGE plpgsql SET plan_cache_mode = force_generic_plan AS $$
#variable_conflict use_column
BEGIN
  PERFORM 1 FROM studios WHERE studios.id = p_studio_id FOR UPDATE;
  RETURN QUERY
  WITH locked AS (
    SELECT sw.id, sw.status FROM sweeps sw WHERE sw.id = p_sweep_id FOR UPDATE
  ), standing AS (
    SELECT
      (SELECT coalesce(sum(l.compute_ms), 0) FROM ledger_entries l WHERE l.studio_id = p_studio_id) AS balance,
      (SELECT coalesce(sum(l.overage_ms - l.compute_ms), 0) FROM ledger_entries l
        WHERE l.studio_id = p_studio_id AND l.kind = 'usage' AND l.created_at >= p_month_start AND l.created_at < p_month_end) AS used,
      coalesce((SELECT q.monthly_compute_ms FROM studio_quotas q WHERE q.studio_id = p_studio_id), p_default_cap_ms) AS cap
  ), easy AS (
    SELECT 1 AS one FROM standing
    WHERE standing.balance - p_compute_ms > p_low_balance_ms AND (standing.used + p_compute_ms) * 100 < standing.cap * p_first_alert_percent
  ), done AS (
    UPDATE sweep_chunks SET status = 'done', lease_owner = NULL, lease_expires_at = NULL, compute_ms = p_compute_ms, last_error = NULL
    WHERE sweep_chunks.id = p_chunk_id AND sweep_chunks.status = 'running' AND sweep_chunks.lease_owner = p_owner
      AND EXISTS (SELECT 1 FROM locked WHERE locked.status NOT IN ('cancelled', 'failed'))
      AND (NOT p_only_if_easy OR EXISTS (SELECT 1 FROM easy))
    RETURNING sweep_chunks.chunk_index
  ), stored AS (
    INSERT INTO sweep_results AS r (sweep_id, studio_id, chunk_index, cells, complete, bytes, location, data)
    SELECT p_sweep_id, p_studio_id, done.chunk_index, p_cells_in_blob, true, p_bytes, p_location, p_data FROM done
    ON CONFLICT (sweep_id, chunk_index) DO UPDATE SET cells = excluded.cells, complete = true, bytes = excluded.bytes, location = excluded.location, data = excluded.data,
      recorded_seq = nextval('sweep_results_recorded_seq_seq')
    RETURNING r.id
  ), billed AS (
    INSERT INTO ledger_entries AS l (studio_id, kind, compute_ms, amount_cents, idempotency_key, sweep_id, chunk_index, memo)
    SELECT p_studio_id, 'usage', -p_compute_ms, 0, p_key, p_sweep_id, done.chunk_index, p_memo
    FROM done WHERE EXISTS (SELECT 1 FROM easy)
    ON CONFLICT (idempotency_key) DO NOTHING
    RETURNING l.compute_ms
  ), counted AS (
    UPDATE sweeps SET
      cells_done = sweeps.cells_done + p_cells_run,
      chunks_done = sweeps.chunks_done + 1,
      compute_ms = sweeps.compute_ms + coalesce((SELECT -b.compute_ms FROM billed b), 0)::integer,
      verdict_counts = (SELECT jsonb_object_agg(t.key, coalesce((sweeps.verdict_counts ->> t.key)::integer, 0) + t.value::integer) FROM jsonb_each_text(p_tally) t),
      status = CASE WHEN sweeps.chunks_done + 1 >= sweeps.chunks THEN 'done' WHEN sweeps.status = 'queued' THEN 'running' ELSE sweeps.status END,
      reason = CASE WHEN sweeps.chunks_done + 1 >= sweeps.chunks THEN NULL ELSE sweeps.reason END,
      finished_at = CASE WHEN sweeps.chunks_done + 1 >= sweeps.chunks THEN now() ELSE sweeps.finished_at END
    WHERE sweeps.id = p_sweep_id AND EXISTS (SELECT 1 FROM done) AND EXISTS (SELECT 1 FROM stored)
    RETURNING sweeps.status
  )
  SELECT (SELECT count(*) FROM counted)::integer, (SELECT c.status FROM counted c), (SELECT locked.status FROM locked), (SELECT count(*) FROM easy)::integer;
END $$;
