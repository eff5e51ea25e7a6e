"""The Jupyter side: IPython extension, cell magic, and the live parameter explorer.

IPython and ipywidgets are imported only when these are used; without the notebook extra,
using them raises MissingExtraError with the pip command.
"""
