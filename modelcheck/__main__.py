from modelcheck.cli import main

raise SystemExit(main())
