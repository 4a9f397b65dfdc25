using InfluxDB.Client;
using WritePrecision = InfluxDB.Client.Api.Domain.WritePrecision;

namespace Tieflow.Storage.Influx;

/// <summary>
/// Writes through InfluxDB.Client's awaited write API (<c>WriteApiAsync</c>, <c>/api/v2/write</c>, gzip): each call
/// waits for the server and throws when it did not accept the lines, so a caller marks lines as written only after
/// the call returned.
/// </summary>
public sealed class InfluxLineWriter : IInfluxLineWriter, IDisposable
{
    private readonly InfluxWriterOptions _options;
    private readonly InfluxDBClient _client;
    private readonly WriteApiAsync _api;

    public InfluxLineWriter(InfluxWriterOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        _options = options;
        var clientOptions = new InfluxDBClientOptions(options.Url)
        {
            Org = options.Org,
            Bucket = options.Bucket,
            Timeout = options.Timeout,
        };
        if (!string.IsNullOrEmpty(options.Token))
        {
            clientOptions.Token = options.Token;
        }

        _client = new InfluxDBClient(clientOptions);
        if (options.Gzip)
        {
            _client.EnableGzip();
        }

        _api = _client.GetWriteApiAsync();
    }

    /// <inheritdoc />
    public Task WriteAsync(IReadOnlyList<string> lines, CancellationToken cancellationToken)
    {
        ArgumentNullException.ThrowIfNull(lines);
        return lines.Count == 0
            ? Task.CompletedTask
            : _api.WriteRecordsAsync(lines, WritePrecision.Ms, _options.Bucket, _options.Org, cancellationToken);
    }

    public void Dispose() => _client.Dispose();
}
