"""The dashboard notebooks, shipped inside the wheel as ``snowprobe_widgets.dashboards``.

Each ``*.ipynb`` here is a dashboard the ``snowprobe`` command can serve: a few lines that
import an explorer app and display it. The notebook's ``metadata.title`` and
``metadata.snowprobe`` (``summary``, ``order``) feed ``snowprobe list`` and the start page.
"""
