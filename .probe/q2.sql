\timing on
PREPARE a AS SELECT (SELECT json_agg(json_build_object('runId', rd.run_id, 'fieldId', rd.field_id, 'entry', rd.entry, 'canonicalValue', rd.canonical_value,
                    'verdict', rd.verdict, 'evaluation', CASE WHEN $2::text[] IS NULL OR rd.field_id = ANY($2::text[]) THEN rd.evaluation END,
                    'disposition', rd.disposition, 'notApplicable', rd.not_applicable, 'naReason', rd.na_reason, 'justification', rd.justification,
                    'version', rd.version, 'updatedBy', rd.updated_by, 'updatedAt', rd.updated_at, 'updatedByName', u.display_name))
               FROM reading rd LEFT JOIN app_user u ON u.id = rd.updated_by WHERE rd.run_id = r.id) AS readings FROM run r WHERE r.id = $1;
PREPARE b AS SELECT (SELECT json_agg(json_build_array(rd.field_id, rd.entry, rd.verdict, rd.canonical_value IS NOT NULL, rd.disposition, rd.not_applicable, rd.na_reason))
               FROM reading rd WHERE rd.run_id = r.id) AS readings FROM run r WHERE r.id = $1;
PREPARE c AS SELECT (SELECT array_agg(rd.field_id || ' ' || rd.verdict) FROM reading rd WHERE rd.run_id = r.id) AS readings FROM run r WHERE r.id = $1;
EXPLAIN (ANALYZE, BUFFERS) EXECUTE a('a79aa10d-10fd-48c1-a791-eefac9b43538', ARRAY['oilPressureRunning']);
EXPLAIN (ANALYZE) EXECUTE b('a79aa10d-10fd-48c1-a791-eefac9b43538');
EXPLAIN (ANALYZE) EXECUTE c('a79aa10d-10fd-48c1-a791-eefac9b43538');
EXPLAIN (ANALYZE) EXECUTE a('a79aa10d-10fd-48c1-a791-eefac9b43538', ARRAY['oilPressureRunning']);EXPLAIN (ANALYZE) EXECUTE b('a79aa10d-10fd-48c1-a791-eefac9b43538');
EXPLAIN (ANALYZE) EXECUTE a('a79aa10d-10fd-48c1-a791-eefac9b43538', ARRAY['oilPressureRunning']);EXPLAIN (ANALYZE) EXECUTE b('a79aa10d-10fd-48c1-a791-eefac9b43538');
EXPLAIN (ANALYZE) EXECUTE a('a79aa10d-10fd-48c1-a791-eefac9b43538', ARRAY['oilPressureRunning']);EXPLAIN (ANALYZE) EXECUTE b('a79aa10d-10fd-48c1-a791-eefac9b43538');
EXPLAIN (ANALYZE) EXECUTE a('a79aa10d-10fd-48c1-a791-eefac9b43538', ARRAY['oilPressureRunning']);EXPLAIN (ANALYZE) EXECUTE b('a79aa10d-10fd-48c1-a791-eefac9b43538');
EXPLAIN (ANALYZE) EXECUTE a('a79aa10d-10fd-48c1-a791-eefac9b43538', ARRAY['oilPressureRunning']);EXPLAIN (ANALYZE) EXECUTE b('a79aa10d-10fd-48c1-a791-eefac9b43538');
EXPLAIN (ANALYZE) EXECUTE a('a79aa10d-10fd-48c1-a791-eefac9b43538', ARRAY['oilPressureRunning']);EXPLAIN (ANALYZE) EXECUTE b('a79aa10d-10fd-48c1-a791-eefac9b43538');
