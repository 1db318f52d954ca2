// The floor's own table for `npm run bench:save` (bench/lib/save-floor.ts writes it); the benchmark creates it as the
// owner after the migrations and grants the application role its rows, as the migrate step does for the product's.
export const FLOOR_TABLE = 'bench_floor_reading'
/** The audit rows of the obliged floor: one per save, as the product writes one to audit_event. */
export const FLOOR_AUDIT_TABLE = 'bench_floor_audit'

export const FLOOR_TABLE_SQL = `
  CREATE TABLE ${FLOOR_TABLE} (
    run_id uuid NOT NULL,
    field_id text NOT NULL,
    entry jsonb,
    version integer NOT NULL,
    updated_at timestamptz NOT NULL,
    PRIMARY KEY (run_id, field_id)
  )`

export const FLOOR_AUDIT_TABLE_SQL = `
  CREATE TABLE ${FLOOR_AUDIT_TABLE} (
    id bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
    occurred_at timestamptz NOT NULL DEFAULT now(),
    actor_id uuid NOT NULL,
    target text NOT NULL,
    after jsonb
  )`
