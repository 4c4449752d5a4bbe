"""The `sitesettle` command (installed as the package sitesettle_cli)."""
