"""The use cases: one function per thing a person does (log an event, release a hold, import
a fleet file, manage users and tokens, edit a model, check a job). Each opens and ends its own
transaction and holds the rules of its use case, so the web views, the API and the CLI only
parse input, call a service and render what it returns."""
