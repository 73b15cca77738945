from sheets.cli import main

raise SystemExit(main())
