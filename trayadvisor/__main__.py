from trayadvisor.cli.main import main

raise SystemExit(main())
