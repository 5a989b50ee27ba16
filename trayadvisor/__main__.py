from trayadvisor.launcher import main

raise SystemExit(main())
