"""The landlord's report (`izwatch report`): one site's installation, its state and its change
history as a document.

`gather` builds one plain document (izwatch.report/1, schema/report.schema.json) from the site
files, the engine's results and the history (read only); `html_page`, `csv_rows` and `json_doc`
render that same document, `diagram` draws its one-line diagram as SVG, and `markup` is the small
HTML builder that escapes every piece of text unless it is already markup.
"""
