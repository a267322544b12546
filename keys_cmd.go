package main

import (
	"encoding/json"
	"fmt"

	"github.com/spf13/cobra"

	"ringsieve/data"
)

func keysCmd(getenv func(string) string) *cobra.Command {
	db := DefaultConfig().DBPath
	if v := getenv("RINGSIEVE_DB"); v != "" {
		db = v
	}
	cmd := &cobra.Command{Use: "keys", Short: "Manage API keys (stored hashed in the database)"}
	// withStore opens the database for one command and closes it after.
	withStore := func(cmd *cobra.Command, fn func(*data.Store) error) error {
		st, err := data.Open(cmd.Context(), db)
		if err != nil {
			return err
		}
		defer st.Close()
		return fn(st)
	}
	cmd.PersistentFlags().StringVar(&db, "db", db, "SQLite database file (env RINGSIEVE_DB)")
	create := &cobra.Command{
		Use:   "create NAME",
		Short: "Create an API key; the secret is printed once",
		Args:  cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return withStore(cmd, func(st *data.Store) error {
				k, secret, err := st.CreateAPIKey(cmd.Context(), args[0])
				if err != nil {
					return err
				}
				fmt.Fprintf(cmd.OutOrStdout(), "id:     %s\nname:   %s\nsecret: %s\n(send it as the X-API-Key header; it is not shown again)\n", k.ID, k.Name, secret)
				return nil
			})
		},
	}
	list := &cobra.Command{
		Use:   "list",
		Short: "List API keys (never their secrets)",
		Args:  cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			return withStore(cmd, func(st *data.Store) error {
				ks, err := st.ListAPIKeys(cmd.Context())
				if err != nil {
					return err
				}
				enc := json.NewEncoder(cmd.OutOrStdout())
				enc.SetIndent("", "  ")
				return enc.Encode(ks)
			})
		},
	}
	revoke := &cobra.Command{
		Use:   "revoke ID",
		Short: "Revoke an API key",
		Args:  cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return withStore(cmd, func(st *data.Store) error { return st.RevokeAPIKey(cmd.Context(), args[0]) })
		},
	}
	cmd.AddCommand(create, list, revoke)
	return cmd
}
