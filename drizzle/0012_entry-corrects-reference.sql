-- A correction names the entry it corrects: that entry must exist (a reference to its own table).
ALTER TABLE "step_entries" ADD CONSTRAINT "step_entries_corrects_fk" FOREIGN KEY ("corrects") REFERENCES "public"."step_entries"("id") ON DELETE no action ON UPDATE no action;
