import sys

from thermonet.cli.main import main

sys.exit(main())
