module semiflow

go 1.26.0

require (
	github.com/go-zeromq/zmq4 v0.17.0
	github.com/google/uuid v1.6.0
	golang.org/x/image v0.48.0
	golang.org/x/sys v0.50.0
	gonum.org/v1/gonum v0.17.0
	gonum.org/v1/netlib v0.0.0-20190313105609-8cb42192e0e0
)

require (
	github.com/go-zeromq/goczmq/v4 v4.2.2 // indirect
	golang.org/x/exp v0.0.0-20261113113407-e3970619a1a4 // indirect
	golang.org/x/sync v0.25.0 // indirect
	golang.org/x/text v0.44.0 // indirect
)
