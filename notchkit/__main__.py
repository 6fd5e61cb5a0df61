from notchkit.cli import entry

entry()
