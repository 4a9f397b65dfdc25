using System.CommandLine;
using System.Text.Json;
using Spectre.Console;
using Tieflow.OpcUa.Security;

namespace Tieflow.Service.Cli;

/// <summary>
/// <c>tieflow ua certs list|show|trust|remove</c>: the certificate store of the ua commands and the monitor (own/,
/// trusted/, issuers/, rejected/). Trusting moves a rejected server certificate into trusted/.
/// </summary>
internal static class UaCertsCommands
{
    public static Command Create(CliContext context)
    {
        var certs = new Command("certs", "Lists, shows, trusts and removes certificates of the OPC UA certificate store.");
        certs.Subcommands.Add(List(context));
        certs.Subcommands.Add(WithKey(context, "show", "Shows one certificate (subject, thumbprint, validity, URIs, host names).", Show));
        certs.Subcommands.Add(WithKey(context, "trust", "Trusts a server certificate: moves it from rejected/ to trusted/ (or copies a certificate file into trusted/).", Trust));
        certs.Subcommands.Add(WithKey(context, "remove", "Deletes a certificate from trusted/, issuers/ or rejected/.", Remove));
        return certs;
    }

    private static Command List(CliContext context)
    {
        Option<string?> pki = UaCommands.Pki();
        Option<bool> json = CommonOptions.Json();
        var command = new Command("list", "Lists the certificates by folder (own, trusted, issuers, rejected).") { pki, json };
        command.SetAction(parsed => UaCommands.Run(context, () =>
        {
            var store = UaSession.Store(parsed.GetValue(pki));
            var entries = store.List();
            if (parsed.GetValue(json))
            {
                WriteJson(context, entries);
                return ExitCodes.Success;
            }
            if (entries.Count == 0)
            {
                context.Output.WriteLine($"No certificates in {store.Root} yet (Tieflow creates its own on the first secured connection).");
                return ExitCodes.Success;
            }
            var table = new Table().AddColumns("Folder", "Subject", "Thumbprint", "Valid until");
            foreach (var e in entries)
            {
                table.AddRow(Markup.Escape(e.Folder), Markup.Escape(e.Subject), e.Thumbprint, UaJson.Time(e.NotAfter) ?? string.Empty);
            }
            context.Console.Write(table);
            return ExitCodes.Success;
        }));
        return command;
    }

    private static Command WithKey(CliContext context, string name, string description, Func<CliContext, UaCertificateStore, string, bool, int> action)
    {
        Argument<string> key = new("certificate") { Description = "Thumbprint (or its first 6+ hex digits), file name, or a certificate file to trust" };
        Option<string?> pki = UaCommands.Pki();
        Option<bool> json = CommonOptions.Json();
        var command = new Command(name, description) { key, pki, json };
        command.SetAction(parsed => UaCommands.Run(context, () =>
        {
            try
            {
                return action(context, UaSession.Store(parsed.GetValue(pki)), parsed.GetValue(key)!, parsed.GetValue(json));
            }
            catch (ArgumentException e)
            {
                throw new UaCliException(ExitCodes.BadInput, e.Message);
            }
        }));
        return command;
    }

    private static int Show(CliContext context, UaCertificateStore store, string key, bool json)
    {
        var matches = store.Find(key);
        if (matches.Count == 0)
        {
            throw new UaCliException(ExitCodes.BadInput, $"no certificate in {store.Root} matches '{key}'");
        }
        if (json)
        {
            WriteJson(context, matches);
            return ExitCodes.Success;
        }
        foreach (var c in matches)
        {
            context.Output.WriteLine($"{c.Folder}: {c.Path}");
            context.Output.WriteLine($"  subject:     {c.Subject}");
            context.Output.WriteLine($"  issuer:      {c.Issuer}");
            context.Output.WriteLine($"  thumbprint:  {c.Thumbprint}");
            context.Output.WriteLine($"  valid:       {UaJson.Time(c.NotBefore)} to {UaJson.Time(c.NotAfter)}");
            context.Output.WriteLine($"  uris:        {string.Join(", ", c.ApplicationUris)}");
            context.Output.WriteLine($"  host names:  {string.Join(", ", c.HostNames)}");
        }
        return ExitCodes.Success;
    }

    private static int Trust(CliContext context, UaCertificateStore store, string key, bool json)
    {
        var path = store.Trust(key);
        context.Output.WriteLine(json ? JsonSerializer.Serialize(new { trusted = path }) : $"trusted: {path}");
        return ExitCodes.Success;
    }

    private static int Remove(CliContext context, UaCertificateStore store, string key, bool json)
    {
        var path = store.Remove(key);
        context.Output.WriteLine(json ? JsonSerializer.Serialize(new { removed = path }) : $"removed: {path}");
        return ExitCodes.Success;
    }

    private static void WriteJson(CliContext context, IReadOnlyList<UaStoredCertificate> entries)
    {
        using var stream = new MemoryStream();
        using (var writer = new Utf8JsonWriter(stream, UaJson.Options))
        {
            writer.WriteStartArray();
            foreach (var e in entries)
            {
                writer.WriteStartObject();
                writer.WriteString("folder", e.Folder);
                writer.WriteString("path", e.Path);
                writer.WriteString("subject", e.Subject);
                writer.WriteString("issuer", e.Issuer);
                writer.WriteString("thumbprint", e.Thumbprint);
                writer.WriteString("notBefore", UaJson.Time(e.NotBefore));
                writer.WriteString("notAfter", UaJson.Time(e.NotAfter));
                writer.WriteStartArray("applicationUris");
                foreach (var u in e.ApplicationUris)
                {
                    writer.WriteStringValue(u);
                }
                writer.WriteEndArray();
                writer.WriteStartArray("hostNames");
                foreach (var h in e.HostNames)
                {
                    writer.WriteStringValue(h);
                }
                writer.WriteEndArray();
                writer.WriteEndObject();
            }
            writer.WriteEndArray();
        }
        context.Output.WriteLine(System.Text.Encoding.UTF8.GetString(stream.ToArray()));
    }
}
