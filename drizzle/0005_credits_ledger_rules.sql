-- The credit ledger's rules, kept by the database itself and not only by the API
-- (api/src/billing/README.md): append-only, every entry balanced, no lab account below zero.
CREATE OR REPLACE FUNCTION ledger_refuse_change() RETURNS trigger AS $$
BEGIN
  RAISE EXCEPTION '% is append-only: book a correcting entry instead', TG_TABLE_NAME;
END;
$$ LANGUAGE plpgsql;
--> statement-breakpoint
CREATE TRIGGER ledger_entries_append_only BEFORE UPDATE OR DELETE ON ledger_entries
  FOR EACH ROW EXECUTE FUNCTION ledger_refuse_change();
--> statement-breakpoint
CREATE TRIGGER ledger_lines_append_only BEFORE UPDATE OR DELETE ON ledger_lines
  FOR EACH ROW EXECUTE FUNCTION ledger_refuse_change();
--> statement-breakpoint
ALTER TABLE ledger_lines ADD CONSTRAINT ledger_lines_amount_nonzero CHECK (amount <> 0);
--> statement-breakpoint
-- Checked at commit, once all lines of the entry are in: at least two lines, summing to zero.
CREATE OR REPLACE FUNCTION ledger_entry_balanced() RETURNS trigger AS $$
DECLARE
  entry uuid := CASE WHEN TG_TABLE_NAME = 'ledger_entries' THEN NEW.id ELSE NEW.entry_id END;
  total numeric;
  n integer;
BEGIN
  SELECT coalesce(sum(amount), 0), count(*) INTO total, n FROM ledger_lines WHERE entry_id = entry;
  IF n < 2 OR total <> 0 THEN
    RAISE EXCEPTION 'ledger entry % is not balanced: % lines summing to %', entry, n, total;
  END IF;
  RETURN NULL;
END;
$$ LANGUAGE plpgsql;
--> statement-breakpoint
CREATE CONSTRAINT TRIGGER ledger_entries_balanced AFTER INSERT ON ledger_entries
  DEFERRABLE INITIALLY DEFERRED FOR EACH ROW EXECUTE FUNCTION ledger_entry_balanced();
--> statement-breakpoint
CREATE CONSTRAINT TRIGGER ledger_lines_balanced AFTER INSERT ON ledger_lines
  DEFERRABLE INITIALLY DEFERRED FOR EACH ROW EXECUTE FUNCTION ledger_entry_balanced();
--> statement-breakpoint
-- A lab's own accounts (available, reserved, free allowance) can never be overdrawn.
CREATE OR REPLACE FUNCTION ledger_lab_account_not_negative() RETURNS trigger AS $$
DECLARE
  balance numeric;
BEGIN
  SELECT coalesce(sum(amount), 0) INTO balance FROM ledger_lines WHERE account = NEW.account;
  IF balance < 0 THEN
    RAISE EXCEPTION 'ledger account % would go negative (%)', NEW.account, balance;
  END IF;
  RETURN NULL;
END;
$$ LANGUAGE plpgsql;
--> statement-breakpoint
CREATE CONSTRAINT TRIGGER ledger_lines_lab_not_negative AFTER INSERT ON ledger_lines
  DEFERRABLE INITIALLY DEFERRED FOR EACH ROW
  WHEN (NEW.account LIKE 'lab:%' AND NEW.amount < 0)
  EXECUTE FUNCTION ledger_lab_account_not_negative();
