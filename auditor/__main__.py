from auditor.cli.main import main

raise SystemExit(main())
