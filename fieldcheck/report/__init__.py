"""Reports: format results computed elsewhere; never compute physics here."""
