.PHONY: test-web
test-web:
	@echo "browser tests not yet written"
