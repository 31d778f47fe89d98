"""The user guide and format documentation (Markdown), rendered into the site."""
