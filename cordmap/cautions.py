"""Clinical cautions shown wherever a result is shown (command line, widget, report)."""
from __future__ import annotations

DECISION_SUPPORT = ("Decision support, not a diagnosis: local protocols and licensed clinicians decide.")
EMERGENCY = ("Acute myelopathy is an emergency: suspected acute compression needs urgent imaging and a "
             "surgical opinion.")
BREATHING = "Lesions at or above C3-C5 threaten breathing: watch vital capacity and the airway."
DYSREFLEXIA = "Lesions at or above T6 carry a risk of autonomic dysreflexia."

GENERAL = (DECISION_SUPPORT, EMERGENCY, BREATHING, DYSREFLEXIA)
BANNER = ("Decision support, not a diagnosis. Acute myelopathy is an emergency; high cervical lesions threaten "
          "breathing; lesions at or above T6 risk autonomic dysreflexia. Local protocols and licensed clinicians "
          "decide.")
