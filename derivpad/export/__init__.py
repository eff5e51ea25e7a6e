"""Files on disk: notebooks exported for offline reading (and, later, calc packages).

Never imports IPython; nbconvert is imported only when an export runs.
"""
