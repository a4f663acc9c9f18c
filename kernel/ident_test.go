package kernel

import (
	"context"
	"sync"
	"testing"

	"github.com/go-zeromq/zmq4"

	"semiflow/kernel/wire"
)

// dialWithID is a client with only a shell socket of the given identity.
func dialWithID(t testing.TB, ci wire.ConnectionInfo, id string) *client {
	t.Helper()
	ctx, cancel := context.WithCancel(context.Background())
	c := &client{t: t, signer: wire.NewSigner(ci.Key), session: wire.NewID(), ctx: ctx, cancel: cancel}
	c.cond = sync.NewCond(&c.mu)
	c.shell = zmq4.NewDealer(ctx, zmq4.WithID(zmq4.SocketIdentity(id)))
	if err := c.shell.Dial(ci.Endpoint(ci.ShellPort)); err != nil {
		t.Fatal(err)
	}
	go c.read("shell", c.shell)
	t.Cleanup(func() { c.shell.Close(); cancel() })
	return c
}
