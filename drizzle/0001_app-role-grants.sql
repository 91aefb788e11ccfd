-- The application connects as countersign_app; migrations run as countersign_owner, which owns
-- every table. The app role may read and add rows, nothing more, unless a later migration
-- grants a table something else on purpose. (GMP record tables get UPDATE/DELETE/TRUNCATE
-- rejected by triggers as well, from 3/10 on.) Both roles must exist before migrating: npm start
-- and npm test create them; on another server the DBA does (see DEVELOPERS.md).
GRANT USAGE ON SCHEMA public TO countersign_app;
--> statement-breakpoint
GRANT SELECT, INSERT ON ALL TABLES IN SCHEMA public TO countersign_app;
--> statement-breakpoint
GRANT USAGE, SELECT ON ALL SEQUENCES IN SCHEMA public TO countersign_app;
--> statement-breakpoint
ALTER DEFAULT PRIVILEGES FOR ROLE countersign_owner IN SCHEMA public GRANT SELECT, INSERT ON TABLES TO countersign_app;
--> statement-breakpoint
ALTER DEFAULT PRIVILEGES FOR ROLE countersign_owner IN SCHEMA public GRANT USAGE, SELECT ON SEQUENCES TO countersign_app;
