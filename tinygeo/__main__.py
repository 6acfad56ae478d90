from tinygeo.host.cli import main
raise SystemExit(main())
