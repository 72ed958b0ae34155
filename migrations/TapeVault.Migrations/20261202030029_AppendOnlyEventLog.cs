using Microsoft.EntityFrameworkCore.Migrations;

#nullable disable

namespace TapeVault.Migrations.Migrations
{
    /// <inheritdoc />
    public partial class AppendOnlyEventLog : Migration
    {
        /// <inheritdoc />
        protected override void Up(MigrationBuilder migrationBuilder)
        {
            // The event log is append-only at the database too, whatever program opens the file.
            migrationBuilder.Sql("""
                CREATE TRIGGER "Events_NoUpdate" BEFORE UPDATE ON "Events"
                BEGIN SELECT RAISE(ABORT, 'The event log is append-only: events cannot be changed.'); END;
                """);
            migrationBuilder.Sql("""
                CREATE TRIGGER "Events_NoDelete" BEFORE DELETE ON "Events"
                BEGIN SELECT RAISE(ABORT, 'The event log is append-only: events cannot be removed.'); END;
                """);
        }

        /// <inheritdoc />
        protected override void Down(MigrationBuilder migrationBuilder)
        {
            migrationBuilder.Sql("DROP TRIGGER IF EXISTS \"Events_NoUpdate\";");
            migrationBuilder.Sql("DROP TRIGGER IF EXISTS \"Events_NoDelete\";");
        }
    }
}
