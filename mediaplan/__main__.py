from mediaplan.cli.main import main

raise SystemExit(main())
