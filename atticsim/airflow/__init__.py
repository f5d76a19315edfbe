"""Airflow: how much outdoor air passes through the attic, with the fan off and on."""
