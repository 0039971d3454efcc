-- A studio's standing, once (issue 24). Written by hand (drizzle-kit does not generate functions).
--
-- Before this migration the chunk recorder (kickdrift_record_chunk, drizzle/0012) summed the
-- studio's balance, this month's usage and its cap itself, and lib/quotas/enforce.ts, lib/quotas/plan.ts
-- and lib/ledger/ledger.ts summed the same from TypeScript: one rule written twice. Now
-- kickdrift_studio_standing is the only place that derives them; the recorder selects from it and
-- TypeScript reads it through lib/quotas/standing.ts. The debit rule that consumes the standing is
-- lib/quotas/standing.ts chunkDebit (prepaid first, then allowed overage, nothing past a cap); the
-- recorder's "easy" test below is exactly the case where that rule bills the whole chunk as prepaid
-- and crosses neither the low-balance mark nor the first cap alert, so it debits in place.
--
-- The function is LANGUAGE sql, STABLE and not STRICT, so PostgreSQL inlines it into the statement
-- that selects from it: a caller pays only for the columns it reads (the recorder reads balance,
-- usage and cap, not the reservations or the running sweeps).

-- Where a studio stands (integer ms): its balance (Σ compute_ms of all its ledger entries, may be
-- negative), its usage in the month [p_month_start, p_month_end) (prepaid and overage:
-- Σ overage_ms − compute_ms of its usage entries), the overage accrued in that month (Σ overage_ms),
-- its monthly cap (its studio_quotas row, else p_default_cap_ms: lib/quotas/plan.ts PLAN_DEFAULTS),
-- the compute reserved by its unfinished sweeps (a sweep metered by work units reserves the
-- unreleased part of its ceiling, one metered by wall clock its estimate less what it used) and the
-- number of its running sweeps. No row when the studio does not exist.
CREATE OR REPLACE FUNCTION kickdrift_studio_standing(p_studio_id text, p_month_start timestamptz, p_month_end timestamptz, p_default_cap_ms bigint)
RETURNS TABLE (status text, balance_ms bigint, month_used_ms bigint, month_overage_ms bigint, cap_ms bigint, reserved_ms bigint, running_sweeps integer)
LANGUAGE sql STABLE AS $$
  SELECT st.status,
    (SELECT coalesce(sum(l.compute_ms), 0) FROM ledger_entries l WHERE l.studio_id = st.id)::bigint,
    (SELECT coalesce(sum(l.overage_ms - l.compute_ms), 0) FROM ledger_entries l
      WHERE l.studio_id = st.id AND l.kind = 'usage' AND l.created_at >= p_month_start AND l.created_at < p_month_end)::bigint,
    (SELECT coalesce(sum(l.overage_ms), 0) FROM ledger_entries l
      WHERE l.studio_id = st.id AND l.kind = 'usage' AND l.created_at >= p_month_start AND l.created_at < p_month_end)::bigint,
    coalesce((SELECT q.monthly_compute_ms FROM studio_quotas q WHERE q.studio_id = st.id), p_default_cap_ms)::bigint,
    (SELECT coalesce(sum(CASE WHEN s.metering = 'wall-clock' THEN greatest(s.estimated_compute_ms - s.compute_ms, 0)
        ELSE greatest(s.ceiling_ms - s.released_ceiling_ms, 0) END), 0) FROM sweeps s
      WHERE s.studio_id = st.id AND s.status IN ('queued', 'running', 'paused'))::bigint,
    (SELECT count(*) FROM sweeps s WHERE s.studio_id = st.id AND s.status = 'running')::integer
  FROM studios st WHERE st.id = p_studio_id
$$;
--> statement-breakpoint

-- The chunk recorder of drizzle/0012, its signature and behaviour unchanged, now reading the
-- studio's standing from kickdrift_studio_standing instead of summing it itself.
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
  p_cells_in_blob integer, p_cells_run integer, p_work_units bigint, p_wall_ms bigint, p_units_per_ms bigint,
  p_bytes integer, p_location text, p_data bytea, p_tally jsonb,
  p_key text, p_memo text, p_month_start timestamptz, p_month_end timestamptz,
  p_low_balance_ms bigint, p_default_cap_ms bigint, p_first_alert_percent integer, p_only_if_easy boolean)
RETURNS TABLE (recorded integer, new_status text, sweep_status text, easy integer, billed_ms bigint)
LANGUAGE plpgsql SET plan_cache_mode = force_generic_plan AS $$
#variable_conflict use_column
DECLARE
  v_metering text;
  v_units bigint;
  v_metered bigint;
  v_done integer;
  v_chunks integer;
  v_ceiling bigint;
  v_total bigint;
  v_target bigint;
  v_billed bigint;
BEGIN
  PERFORM 1 FROM studios WHERE studios.id = p_studio_id FOR UPDATE;
  -- Read under the sweep's lock (taken again, harmlessly, by the statement below): chunks of one
  -- sweep landing at once on several runners are debited one after the other.
  SELECT sw.metering, sw.work_units, sw.compute_ms, sw.chunks_done, sw.chunks, sw.ceiling_ms
  INTO v_metering, v_units, v_metered, v_done, v_chunks, v_ceiling
  FROM sweeps sw WHERE sw.id = p_sweep_id FOR UPDATE;
  IF v_metering IS NULL OR v_metering = 'wall-clock' THEN
    v_billed := p_wall_ms;
  ELSE
    v_total := v_units + p_work_units;
    IF v_done + 1 >= v_chunks THEN
      v_target := (v_total + p_units_per_ms - 1) / p_units_per_ms;
    ELSE
      v_target := v_total / p_units_per_ms;
    END IF;
    v_billed := greatest(least(v_target, v_ceiling) - v_metered, 0);
  END IF;
  RETURN QUERY
  WITH locked AS (
    SELECT sw.id, sw.status FROM sweeps sw WHERE sw.id = p_sweep_id FOR UPDATE
  ), standing AS (
    SELECT s.balance_ms AS balance, s.month_used_ms AS used, s.cap_ms AS cap
    FROM kickdrift_studio_standing(p_studio_id, p_month_start, p_month_end, p_default_cap_ms) s
  ), easy AS (
    SELECT 1 AS one FROM standing
    WHERE standing.balance - v_billed > p_low_balance_ms AND (standing.used + v_billed) * 100 < standing.cap * p_first_alert_percent
  ), done AS (
    UPDATE sweep_chunks SET status = 'done', lease_owner = NULL, lease_expires_at = NULL, compute_ms = v_billed,
      work_units = p_work_units, wall_ms = p_wall_ms, last_error = NULL
    WHERE sweep_chunks.id = p_chunk_id AND sweep_chunks.status = 'running' AND sweep_chunks.lease_owner = p_owner
      AND EXISTS (SELECT 1 FROM locked WHERE locked.status NOT IN ('cancelled', 'failed'))
      AND (NOT p_only_if_easy OR EXISTS (SELECT 1 FROM easy))
    RETURNING sweep_chunks.chunk_index, sweep_chunks.ceiling_ms
  ), stored AS (
    INSERT INTO sweep_results AS r (sweep_id, studio_id, chunk_index, cells, complete, bytes, location, data)
    SELECT p_sweep_id, p_studio_id, done.chunk_index, p_cells_in_blob, true, p_bytes, p_location, p_data FROM done
    ON CONFLICT (sweep_id, chunk_index) DO UPDATE SET cells = excluded.cells, complete = true, bytes = excluded.bytes, location = excluded.location, data = excluded.data,
      recorded_seq = nextval('sweep_results_recorded_seq_seq')
    RETURNING r.id
  ), billed AS (
    INSERT INTO ledger_entries AS l (studio_id, kind, compute_ms, amount_cents, idempotency_key, sweep_id, chunk_index, memo)
    SELECT p_studio_id, 'usage', -v_billed, 0, p_key, p_sweep_id, done.chunk_index, p_memo
    FROM done WHERE EXISTS (SELECT 1 FROM easy)
    ON CONFLICT (idempotency_key) DO NOTHING
    RETURNING l.compute_ms
  ), counted AS (
    UPDATE sweeps SET
      cells_done = sweeps.cells_done + p_cells_run,
      chunks_done = sweeps.chunks_done + 1,
      work_units = sweeps.work_units + p_work_units,
      released_ceiling_ms = sweeps.released_ceiling_ms + (SELECT d.ceiling_ms FROM done d),
      compute_ms = sweeps.compute_ms + coalesce((SELECT -b.compute_ms FROM billed b), 0)::integer,
      verdict_counts = (SELECT jsonb_object_agg(t.key, coalesce((sweeps.verdict_counts ->> t.key)::integer, 0) + t.value::integer) FROM jsonb_each_text(p_tally) t),
      status = CASE WHEN sweeps.chunks_done + 1 >= sweeps.chunks THEN 'done' WHEN sweeps.status = 'queued' THEN 'running' ELSE sweeps.status END,
      reason = CASE WHEN sweeps.chunks_done + 1 >= sweeps.chunks THEN NULL ELSE sweeps.reason END,
      finished_at = CASE WHEN sweeps.chunks_done + 1 >= sweeps.chunks THEN now() ELSE sweeps.finished_at END
    WHERE sweeps.id = p_sweep_id AND EXISTS (SELECT 1 FROM done) AND EXISTS (SELECT 1 FROM stored)
    RETURNING sweeps.status
  )
  SELECT (SELECT count(*) FROM counted)::integer, (SELECT c.status FROM counted c), (SELECT locked.status FROM locked), (SELECT count(*) FROM easy)::integer, v_billed;
END $$;
