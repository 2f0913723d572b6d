"""Text a person reads: terminal reports, exports (Markdown, CSV, HTML) and plots. Views format results;
they compute no chemistry."""
