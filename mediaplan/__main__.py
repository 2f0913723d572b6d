from mediaplan.cli import main

raise SystemExit(main())
