using Microsoft.EntityFrameworkCore.Migrations;

#nullable disable

namespace TapeVault.Migrations.Migrations
{
    /// <inheritdoc />
    public partial class CaptureContainerAndFileMetadata : Migration
    {
        /// <inheritdoc />
        protected override void Up(MigrationBuilder migrationBuilder)
        {
            migrationBuilder.AddColumn<string>(
                name: "Container",
                table: "Captures",
                type: "TEXT",
                maxLength: 8,
                nullable: false,
                defaultValue: "wav");

            migrationBuilder.AddColumn<string>(
                name: "EmbeddedMetadata",
                table: "Captures",
                type: "TEXT",
                nullable: false,
                defaultValue: "");
        }

        /// <inheritdoc />
        protected override void Down(MigrationBuilder migrationBuilder)
        {
            migrationBuilder.DropColumn(
                name: "Container",
                table: "Captures");

            migrationBuilder.DropColumn(
                name: "EmbeddedMetadata",
                table: "Captures");
        }
    }
}
