"""Jinja2 templates and CSS of the dossier site and packets (package data)."""
