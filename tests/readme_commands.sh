#!/usr/bin/env bash
# Placeholder replaced below when the README gains example commands.
exit 0
