-- pgbench script: one single-row INSERT per transaction (the baseline for build creation).
INSERT INTO load_rows (payload) VALUES (md5(random()::text));
