from auditor.cli import main

raise SystemExit(main())
