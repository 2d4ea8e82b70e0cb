package browsertest

import (
	"bufio"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"sync"
)

// cdp is a DevTools protocol client over Chromium's --remote-debugging-pipe:
// the browser reads commands from its file descriptor 3 and writes answers
// and events to descriptor 4, each message a JSON object ended by a NUL
// byte. No port is opened, so no other process on the machine can drive
// the test's browser.
type cdp struct {
	w io.Writer

	mu      sync.Mutex
	nextID  int64
	waiting map[int64]chan reply
	subs    map[int]subscription
	nextSub int
	closed  error // set when the reader stops
}

// reply is the answer to one command.
type reply struct {
	result json.RawMessage
	err    error
}

// event is one protocol event.
type event struct {
	Method    string
	SessionID string
	Params    json.RawMessage
}

type subscription struct {
	session string // "" means events of every session
	fn      func(event)
}

// message is what the browser writes: an answer (ID set) or an event.
type message struct {
	ID        int64           `json:"id"`
	Result    json.RawMessage `json:"result"`
	Error     *protocolError  `json:"error"`
	Method    string          `json:"method"`
	Params    json.RawMessage `json:"params"`
	SessionID string          `json:"sessionId"`
}

type protocolError struct {
	Code    int    `json:"code"`
	Message string `json:"message"`
	Data    string `json:"data"`
}

func (e *protocolError) Error() string {
	if e.Data != "" {
		return fmt.Sprintf("%s (%d): %s", e.Message, e.Code, e.Data)
	}
	return fmt.Sprintf("%s (%d)", e.Message, e.Code)
}

func newCDP(w io.Writer, r io.Reader) *cdp {
	c := &cdp{w: w, waiting: map[int64]chan reply{}, subs: map[int]subscription{}}
	go c.read(r)
	return c
}

// read dispatches the browser's messages until the pipe closes.
func (c *cdp) read(r io.Reader) {
	br := bufio.NewReaderSize(r, 1<<20)
	var err error
	for {
		var raw []byte
		raw, err = br.ReadBytes(0)
		if err != nil {
			break
		}
		var m message
		if err = json.Unmarshal(raw[:len(raw)-1], &m); err != nil {
			err = fmt.Errorf("undecodable message from the browser: %w", err)
			break
		}
		if m.ID != 0 {
			c.mu.Lock()
			ch := c.waiting[m.ID]
			delete(c.waiting, m.ID)
			c.mu.Unlock()
			if ch != nil {
				var rerr error
				if m.Error != nil {
					rerr = m.Error
				}
				ch <- reply{m.Result, rerr}
			}
			continue
		}
		ev := event{Method: m.Method, SessionID: m.SessionID, Params: m.Params}
		c.mu.Lock()
		var fns []func(event)
		for _, s := range c.subs {
			if s.session == "" || s.session == m.SessionID {
				fns = append(fns, s.fn)
			}
		}
		c.mu.Unlock()
		for _, fn := range fns {
			fn(ev)
		}
	}
	if errors.Is(err, io.EOF) {
		err = errors.New("the browser closed its DevTools pipe (did it exit?)")
	}
	c.mu.Lock()
	c.closed = err
	for id, ch := range c.waiting {
		ch <- reply{err: err}
		delete(c.waiting, id)
	}
	c.mu.Unlock()
}

// subscribe calls fn, on the reader goroutine, for every event of session
// (every session when ""). fn must not block. The returned func ends it.
func (c *cdp) subscribe(session string, fn func(event)) (cancel func()) {
	c.mu.Lock()
	defer c.mu.Unlock()
	id := c.nextSub
	c.nextSub++
	c.subs[id] = subscription{session, fn}
	return func() {
		c.mu.Lock()
		delete(c.subs, id)
		c.mu.Unlock()
	}
}

// start sends a command and returns the channel its answer arrives on.
func (c *cdp) start(session, method string, params any) (<-chan reply, error) {
	c.mu.Lock()
	if c.closed != nil {
		c.mu.Unlock()
		return nil, c.closed
	}
	c.nextID++
	id := c.nextID
	ch := make(chan reply, 1)
	c.waiting[id] = ch
	msg := map[string]any{"id": id, "method": method}
	if params != nil {
		msg["params"] = params
	}
	if session != "" {
		msg["sessionId"] = session
	}
	b, err := json.Marshal(msg)
	if err == nil {
		_, err = c.w.Write(append(b, 0))
	}
	if err != nil {
		delete(c.waiting, id)
	}
	c.mu.Unlock()
	if err != nil {
		return nil, fmt.Errorf("send %s: %w", method, err)
	}
	return ch, nil
}

// call sends a command and decodes its result into out (when not nil),
// giving up when ctx ends.
func (c *cdp) call(ctx context.Context, session, method string, params, out any) error {
	ch, err := c.start(session, method, params)
	if err != nil {
		return err
	}
	select {
	case r := <-ch:
		if r.err != nil {
			return fmt.Errorf("%s: %w", method, r.err)
		}
		if out != nil {
			if err := json.Unmarshal(r.result, out); err != nil {
				return fmt.Errorf("%s: decode result: %w", method, err)
			}
		}
		return nil
	case <-ctx.Done():
		return fmt.Errorf("%s: %w", method, context.Cause(ctx))
	}
}
