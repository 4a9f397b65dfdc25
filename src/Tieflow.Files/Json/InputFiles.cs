using System.Runtime.InteropServices;
using System.Text;

namespace Tieflow.Files;

/// <summary>
/// Reads input files safely: only regular files (a FIFO, a device or a directory is refused with a message that says
/// what the path is), never more than a stated size, and a path that the file system cannot take (a NUL character,
/// for one) is bad input. Every failure is an <see cref="InputException"/> naming the file.
/// </summary>
public static partial class InputFiles
{
    /// <summary>Largest system or case file read, bytes (4 MiB); real files are a few kilobytes.</summary>
    public const long MaxCaseFileBytes = 4L * 1024 * 1024;

    /// <summary>Largest file read whole for any other kind (plant, scenario, settings), bytes (16 MiB). History files stream.</summary>
    public const long MaxDocumentBytes = 16L * 1024 * 1024;

    /// <summary>Why <paramref name="path"/> cannot be a file name, or null when it can.</summary>
    public static string? InvalidPathReason(string path)
    {
        if (string.IsNullOrWhiteSpace(path))
        {
            return "the path is empty";
        }

        int nul = path.IndexOf('\0', StringComparison.Ordinal);
        if (nul >= 0)
        {
            return $"the path contains a NUL character (at position {nul + 1}); a file name cannot hold one";
        }

        if (path.IndexOfAny(Path.GetInvalidPathChars()) is int bad and >= 0)
        {
            return $"the path contains the character U+{(int)path[bad]:X4}, which a file name cannot hold";
        }

        try
        {
            _ = Path.GetFullPath(path);
        }
        catch (Exception e) when (e is ArgumentException or NotSupportedException or PathTooLongException)
        {
            return $"the path is not valid: {e.Message}";
        }

        return null;
    }

    /// <summary>What kind of thing is at <paramref name="path"/>: null for a regular file (or when it cannot be told), else a description such as "a directory" or "a named pipe (FIFO)".</summary>
    public static string? NotARegularFile(string path)
    {
        if (Directory.Exists(path))
        {
            return "a directory";
        }

        if (!OperatingSystem.IsLinux())
        {
            return null;
        }

        try
        {
            byte[] buffer = new byte[256];
            if (Statx(AtFdCwd, path, 0, StatxType, buffer) != 0)
            {
                return null;
            }

            int mode = BitConverter.ToUInt16(buffer, 28) & 0xF000;
            return mode switch
            {
                0x8000 => null,
                0x4000 => "a directory",
                0x1000 => "a named pipe (FIFO)",
                0x2000 => "a character device",
                0x6000 => "a block device",
                0xC000 => "a socket",
                _ => "not a regular file",
            };
        }
        catch (Exception e) when (e is EntryPointNotFoundException or DllNotFoundException)
        {
            // Without statx the size limit below still bounds what is read.
            return null;
        }
    }

    /// <summary>The text of a regular file of at most <paramref name="maxBytes"/> bytes (UTF-8).</summary>
    /// <exception cref="InputException">When the path is invalid, missing, not a regular file, too large or unreadable.</exception>
    public static string ReadText(string path, long maxBytes = MaxCaseFileBytes)
    {
        if (InvalidPathReason(path) is { } reason)
        {
            throw new InputException(Printable(path), "$", reason);
        }

        if (NotARegularFile(path) is { } what)
        {
            throw new InputException(path, "$", $"this is {what}, not a regular file; give the path of a file");
        }

        if (!File.Exists(path))
        {
            throw new InputException(path, "$", "the file does not exist");
        }

        try
        {
            var info = new FileInfo(path);
            if (info.Length > maxBytes)
            {
                throw new InputException(path, "$", $"the file is {info.Length:N0} bytes; files of this kind may be at most {maxBytes:N0} bytes");
            }

            using var stream = new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.Read, 4096, FileOptions.SequentialScan);
            byte[] bytes = ReadAtMost(stream, maxBytes + 1);
            if (bytes.Length > maxBytes)
            {
                throw new InputException(path, "$", $"the file is larger than {maxBytes:N0} bytes, the most a file of this kind may be");
            }

            return new UTF8Encoding(encoderShouldEmitUTF8Identifier: false, throwOnInvalidBytes: false).GetString(bytes).TrimStart('\uFEFF');
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new InputException(path, "$", $"the file cannot be read: {e.Message}");
        }
    }

    /// <summary>The path with control characters shown as escapes, for messages.</summary>
    public static string Printable(string path)
    {
        var sb = new StringBuilder(path.Length);
        foreach (char ch in path)
        {
            sb.Append(char.IsControl(ch) ? $"\\u{(int)ch:x4}" : ch.ToString());
        }

        return sb.ToString();
    }

    private static byte[] ReadAtMost(Stream stream, long limit)
    {
        using var buffer = new MemoryStream();
        byte[] chunk = new byte[81920];
        while (buffer.Length < limit)
        {
            int wanted = (int)Math.Min(chunk.Length, limit - buffer.Length);
            int read = stream.Read(chunk, 0, wanted);
            if (read == 0)
            {
                break;
            }

            buffer.Write(chunk, 0, read);
        }

        return buffer.ToArray();
    }

    private const int AtFdCwd = -100;

    private const uint StatxType = 1;

    // statx(2): its struct has the same layout on every Linux architecture (stx_mode is the u16 at offset 28).
    [LibraryImport("libc", EntryPoint = "statx", StringMarshalling = StringMarshalling.Utf8, SetLastError = true)]
    private static partial int Statx(int dirfd, string path, int flags, uint mask, [Out] byte[] buffer);
}
