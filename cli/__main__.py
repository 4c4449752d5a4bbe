import sys

from sitesettle_cli.main import main

sys.exit(main())
