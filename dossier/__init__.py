"""dossier: reaction-feasibility dossiers for process-safety review boards."""

__version__ = "0.1.0"
