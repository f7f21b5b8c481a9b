#!/usr/bin/python3
"""Outside client for Spinward's health endpoint (docs/health.md).

Fetches with Python's urllib and parses with parsers that share no code with the C++ server:
prometheus_client.parser (Debian's python3-prometheus-client) for /metrics, the json module for
/healthz and /api/points. Prints flat key=value lines a C++ test can compare.

  metrics_parser.py metrics URL        status=, content_type=, then per family
                                       family.NAME=TYPE and per sample sample.NAME{k="v"}=VALUE
  metrics_parser.py json URL           status=, content_type=, then one line per leaf:
                                       a.b.0.c=<json value>
  metrics_parser.py status METHOD URL  status=, allow= (the HTTP status of one request)

Exits 1 (message on stderr) when the body does not parse.
"""
import json
import sys
import urllib.error
import urllib.request

from prometheus_client.parser import text_string_to_metric_families


def fetch(url, method="GET"):
    request = urllib.request.Request(url, method=method)
    try:
        with urllib.request.urlopen(request, timeout=20) as response:
            return response.status, response.headers, response.read().decode("utf-8")
    except urllib.error.HTTPError as error:
        return error.code, error.headers, error.read().decode("utf-8")


def flatten(prefix, value, out):
    if isinstance(value, dict):
        for key in sorted(value):
            flatten(f"{prefix}.{key}" if prefix else key, value[key], out)
    elif isinstance(value, list):
        out.append(f"{prefix}.length={len(value)}" if prefix else f"length={len(value)}")
        for i, item in enumerate(value):
            flatten(f"{prefix}.{i}" if prefix else str(i), item, out)
    else:
        out.append(f"{prefix}={json.dumps(value)}")


def main(argv):
    if len(argv) == 3 and argv[1] == "metrics":
        status, headers, body = fetch(argv[2])
        print(f"status={status}")
        print(f"content_type={headers.get('Content-Type', '')}")
        for family in text_string_to_metric_families(body):
            print(f"family.{family.name}={family.type}")
            if not family.documentation:
                raise SystemExit(f"family {family.name} has no HELP text")
            for sample in family.samples:
                labels = ",".join(f'{k}="{v}"' for k, v in sorted(sample.labels.items()))
                value = int(sample.value) if sample.value == int(sample.value) else sample.value
                print(f"sample.{sample.name}{{{labels}}}={value}")
    elif len(argv) == 3 and argv[1] == "json":
        status, headers, body = fetch(argv[2])
        print(f"status={status}")
        print(f"content_type={headers.get('Content-Type', '')}")
        lines = []
        flatten("", json.loads(body), lines)
        print("\n".join(lines))
    elif len(argv) == 4 and argv[1] == "status":
        status, headers, _ = fetch(argv[3], method=argv[2])
        print(f"status={status}")
        print(f"allow={headers.get('Allow', '')}")
    else:
        raise SystemExit(__doc__)


if __name__ == "__main__":
    main(sys.argv)
