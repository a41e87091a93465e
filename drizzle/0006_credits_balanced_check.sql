-- 0005's balance check read NEW.id / NEW.entry_id in one CASE, which PL/pgSQL cannot plan for both
-- tables: give each table's trigger its own way of naming the entry.
CREATE OR REPLACE FUNCTION ledger_check_entry_balanced(entry uuid) RETURNS void AS $$
DECLARE
  total numeric;
  n integer;
BEGIN
  SELECT coalesce(sum(amount), 0), count(*) INTO total, n FROM ledger_lines WHERE entry_id = entry;
  IF n < 2 OR total <> 0 THEN
    RAISE EXCEPTION 'ledger entry % is not balanced: % lines summing to %', entry, n, total;
  END IF;
END;
$$ LANGUAGE plpgsql;
--> statement-breakpoint
CREATE OR REPLACE FUNCTION ledger_entry_balanced() RETURNS trigger AS $$
BEGIN
  PERFORM ledger_check_entry_balanced(NEW.id);
  RETURN NULL;
END;
$$ LANGUAGE plpgsql;
--> statement-breakpoint
CREATE OR REPLACE FUNCTION ledger_line_balanced() RETURNS trigger AS $$
BEGIN
  PERFORM ledger_check_entry_balanced(NEW.entry_id);
  RETURN NULL;
END;
$$ LANGUAGE plpgsql;
--> statement-breakpoint
DROP TRIGGER ledger_lines_balanced ON ledger_lines;
--> statement-breakpoint
CREATE CONSTRAINT TRIGGER ledger_lines_balanced AFTER INSERT ON ledger_lines
  DEFERRABLE INITIALLY DEFERRED FOR EACH ROW EXECUTE FUNCTION ledger_line_balanced();
