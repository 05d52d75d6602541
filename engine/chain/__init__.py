"""The one chain: assessment -> effective climate -> energy -> ranked table, and the JSON/CSV
documents of a ranked table.

Above :mod:`engine.energy`; the screening, the summary, the command line and the dashboard
all call :func:`evaluate` here.
"""
from engine.chain import documents, pipeline, ranking, verdict, whatif
from engine.chain.documents import rank_document, rank_records
from engine.chain.pipeline import Evaluation, evaluate

__all__ = ["documents", "pipeline", "ranking", "verdict", "whatif", "rank_document",
           "rank_records", "Evaluation", "evaluate"]
