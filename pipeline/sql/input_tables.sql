-- input_tables: the stored input tables (input_<table>) of the file.
SELECT table_name
FROM information_schema.tables
WHERE table_type = 'BASE TABLE' AND starts_with(table_name, 'input_')
ORDER BY table_name;
