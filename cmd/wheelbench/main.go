// Command wheelbench runs the wheelbench HTTP service and its chores:
//
//	wheelbench serve                      run pending migrations, then serve HTTP
//	wheelbench migrate                    run pending migrations and exit
//	wheelbench demo                       load the invented demo shop, print a fresh key
//	wheelbench admin create-org --name N  create an organisation and its first admin key
//	wheelbench admin create-key --org ID [--location ID] --role read|write|admin
//	wheelbench admin revoke-key --prefix P
//
// Configuration comes from the environment; see README.md.
package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"log/slog"
	"os"
	"os/signal"
	"strconv"
	"strings"
	"syscall"
	"time"

	"wheelbench/service/background"
)

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	if err := run(ctx, os.Args[1:], os.Getenv, os.Stdout, os.Stderr); err != nil {
		fmt.Fprintln(os.Stderr, "wheelbench:", err)
		var ue usageError
		if errors.As(err, &ue) {
			os.Exit(2)
		}
		os.Exit(1)
	}
}

type usageError string

func (e usageError) Error() string { return string(e) }

const usage = `usage:
  wheelbench serve
  wheelbench migrate
  wheelbench demo
  wheelbench admin create-org --name NAME
  wheelbench admin create-key --org ID [--location ID] --role read|write|admin [--name NAME]
  wheelbench admin revoke-key --prefix PREFIX`

// config is every setting, read from the environment.
type config struct {
	Addr            string
	DatabaseURL     string
	LogLevel        slog.Level
	ShutdownTimeout time.Duration
	RequestTimeout  time.Duration
	// Webhooks: private destinations allowed, the retry window, the
	// dispatcher's poll interval.
	WebhookAllowPrivate bool
	WebhookRetryWindow  time.Duration
	WebhookPoll         time.Duration
	// ChangeRetention is how long the change feed keeps rows.
	ChangeRetention time.Duration
}

func loadConfig(getenv func(string) string) (config, error) {
	c := config{Addr: ":8080", ShutdownTimeout: 20 * time.Second, RequestTimeout: 30 * time.Second,
		WebhookRetryWindow: 72 * time.Hour, WebhookPoll: time.Second, ChangeRetention: background.DefaultRetention.Changes}
	if v := getenv("WHEELBENCH_ADDR"); v != "" {
		c.Addr = v
	}
	c.DatabaseURL = getenv("WHEELBENCH_DATABASE_URL")
	if v := getenv("WHEELBENCH_LOG_LEVEL"); v != "" {
		if err := c.LogLevel.UnmarshalText([]byte(v)); err != nil {
			return c, fmt.Errorf("WHEELBENCH_LOG_LEVEL: %w", err)
		}
	}
	for _, d := range []struct {
		env string
		dst *time.Duration
	}{{"WHEELBENCH_SHUTDOWN_TIMEOUT", &c.ShutdownTimeout}, {"WHEELBENCH_REQUEST_TIMEOUT", &c.RequestTimeout},
		{"WHEELBENCH_WEBHOOK_RETRY_WINDOW", &c.WebhookRetryWindow}, {"WHEELBENCH_WEBHOOK_POLL", &c.WebhookPoll},
		{"WHEELBENCH_CHANGE_RETENTION", &c.ChangeRetention}} {
		if v := getenv(d.env); v != "" {
			t, err := time.ParseDuration(v)
			if err != nil || t <= 0 {
				return c, fmt.Errorf("%s: want a positive duration such as 20s, got %q", d.env, v)
			}
			*d.dst = t
		}
	}
	if v := getenv("WHEELBENCH_WEBHOOK_ALLOW_PRIVATE"); v != "" {
		b, err := strconv.ParseBool(v)
		if err != nil {
			return c, fmt.Errorf("WHEELBENCH_WEBHOOK_ALLOW_PRIVATE: want true or false, got %q", v)
		}
		c.WebhookAllowPrivate = b
	}
	return c, nil
}

func run(ctx context.Context, args []string, getenv func(string) string, stdout, stderr io.Writer) error {
	if len(args) == 0 {
		return usageError(usage)
	}
	cfg, err := loadConfig(getenv)
	if err != nil {
		return err
	}
	log := slog.New(slog.NewJSONHandler(stderr, &slog.HandlerOptions{Level: cfg.LogLevel}))
	switch args[0] {
	case "serve":
		return serve(ctx, cfg, getenv, log)
	case "migrate":
		app, err := openApp(ctx, cfg, getenv, log)
		if err != nil {
			return err
		}
		app.close()
		fmt.Fprintln(stdout, "migrations applied")
		return nil
	case "demo":
		return runDemo(ctx, cfg, getenv, log, stdout)
	case "admin":
		return admin(ctx, cfg, getenv, log, args[1:], stdout)
	case "help", "-h", "--help":
		fmt.Fprintln(stdout, usage)
		return nil
	}
	return usageError(fmt.Sprintf("unknown command %q\n%s", strings.Join(args, " "), usage))
}
